"""Run every benchmark module's ``run()``: ``python -m bench [name ...]``."""

import importlib
import pkgutil
import sys

import bench


def main(argv: list[str]) -> None:
    names = sorted(
        m.name for m in pkgutil.iter_modules(bench.__path__) if m.name.startswith("bench_")
    )
    wanted = [n for n in names if not argv or n in argv or n.removeprefix("bench_") in argv]
    for name in wanted:
        print(f"== {name}", flush=True)
        importlib.import_module(f"bench.{name}").run()


if __name__ == "__main__":
    main(sys.argv[1:])
