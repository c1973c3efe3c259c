"""Regenerate the synthetic scenario: ``python -m thrustmap.synth OUTDIR [--seed N] [--stations N]``."""

from __future__ import annotations

import argparse
import logging
import sys

from thrustmap.errors import ThrustmapError
from thrustmap.synth._scenario import DEFAULT_STATIONS, write_scenario

log = logging.getLogger("thrustmap.synth")


def main(argv: list[str] | None = None) -> int:
    """Parse the command line, write the scenario and return the exit status.

    Examples
    --------
    >>> import tempfile
    >>> main([tempfile.mkdtemp(), "--seed", "1", "--stations", "60", "--quiet"])
    0
    """
    parser = argparse.ArgumentParser(
        prog="python -m thrustmap.synth",
        description="Write the SYNTHETIC demo scenario (an invented fold-and-thrust belt) to OUTDIR.",
    )
    parser.add_argument("outdir", help="output folder, created when missing")
    parser.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    parser.add_argument(
        "--stations",
        type=int,
        default=DEFAULT_STATIONS,
        help=f"number of station sites (default {DEFAULT_STATIONS})",
    )
    parser.add_argument("--overwrite", action="store_true", help="replace existing files")
    parser.add_argument("--quiet", action="store_true", help="print nothing but errors")
    args = parser.parse_args(argv)
    logging.basicConfig(level=logging.WARNING, format="%(message)s")
    logging.getLogger("thrustmap").setLevel(logging.WARNING if args.quiet else logging.INFO)
    try:
        sc = write_scenario(
            args.outdir, seed=args.seed, n_stations=args.stations, overwrite=args.overwrite
        )
    except ThrustmapError as exc:
        log.error("error: %s", exc)
        return 1
    fsheet = sc.truth["field_sheet"]
    log.info(
        "synthetic scenario (seed %d): %d station rows, %d field-sheet rows (%d bad) in %s",
        args.seed,
        sc.truth["stations"]["n_rows"],
        fsheet["n_rows"],
        fsheet["n_bad_rows"],
        args.outdir,
    )
    return 0


if __name__ == "__main__":
    sys.exit(main())
