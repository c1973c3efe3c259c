"""Benchmarks: each ``bench_*.py`` module has a ``run()`` that prints speed ratios."""
