"""Speed benchmarks: ``python -m bench`` runs the ``run()`` of every ``bench_*`` module.

Each benchmark times thrustmap beside a reference implementation in the same
process on the same data, prints the ratio and checks that the answers agree.
"""
