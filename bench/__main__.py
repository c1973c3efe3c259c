"""Run every benchmark module: ``python -m bench [--quick] [name ...]``.

``--quick`` sets ``THRUSTMAP_BENCH_QUICK=1`` (small sizes, for a smoke run);
names select modules by substring (``python -m bench structure``).
"""

from __future__ import annotations

import argparse
import importlib
import os
import pkgutil
import sys
import time
import traceback

import bench


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m bench", description=__doc__)
    parser.add_argument(
        "names", nargs="*", help="run only modules whose name contains one of these"
    )
    parser.add_argument("--quick", action="store_true", help="small sizes, for a smoke run")
    args = parser.parse_args(argv)
    if args.quick:
        os.environ["THRUSTMAP_BENCH_QUICK"] = "1"
    modules = sorted(
        m.name
        for m in pkgutil.iter_modules(bench.__path__)
        if m.name.startswith("bench_") and (not args.names or any(n in m.name for n in args.names))
    )
    failed = []
    for name in modules:
        print(f"== {name}", flush=True)
        start = time.perf_counter()
        try:
            importlib.import_module(f"bench.{name}").run()
        except Exception:
            traceback.print_exc()
            failed.append(name)
        print(f"== {name} done in {time.perf_counter() - start:.1f} s\n", flush=True)
    if failed:
        print(f"FAILED: {', '.join(failed)}", file=sys.stderr)
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
