"""Thrust network at scale: 10,000 traces and 1,000 scanlines.

The vectorised topology (STRtree + shapely 2 array functions) and scanline
intersections are compared, on a subset, with a naive per-pair shapely loop
run in the same process; then the whole analysis runs on the full network.
"""

from __future__ import annotations

import time

import geopandas as gpd
import numpy as np
import shapely

from thrustmap.thrusts import analyze_thrusts
from thrustmap.thrusts.spacing import cast_scanlines, scanline_intersections
from thrustmap.thrusts.topology import build_topology

X0, Y0 = 600000.0, 5000000.0


def make_network(
    columns: int, rows: int, *, spacing: float = 200.0, length: float = 900.0, seed: int = 0
):
    """Imbricate traces: ``columns`` thrusts across strike, each broken into ``rows`` segments.

    Segments wiggle a little and are staggered along strike; every fifth ends
    with a bend onto the next thrust toward the foreland (a truncation).
    Hanging walls lie to the west, transport is to the east.
    """
    rng = np.random.default_rng(seed)
    step = length / 0.9
    i, j = np.meshgrid(np.arange(columns), np.arange(rows), indexing="ij")
    i, j = i.ravel(), j.ravel()
    t = np.linspace(0.0, 1.0, 10)
    phase = rng.random(columns) * step
    x = (
        X0
        + i[:, None] * spacing
        + 20.0 * np.sin(2 * np.pi * (t[None, :] + rng.random((len(i), 1))))
    )
    y = Y0 + phase[i][:, None] + j[:, None] * step + t[None, :] * length
    lines = shapely.linestrings(np.stack([x, y], axis=-1))
    bend = np.flatnonzero((np.arange(len(i)) % 5 == 0) & (i < columns - 1))
    aim = shapely.points(X0 + (i[bend] + 1) * spacing, y[bend, -1] + 100.0)
    nxt = shapely.STRtree(lines).query_nearest(aim, all_matches=False)[1]
    onto = shapely.line_interpolate_point(lines[nxt], shapely.line_locate_point(lines[nxt], aim))
    coords = np.concatenate(
        [np.stack([x[bend], y[bend]], axis=-1), shapely.get_coordinates(onto)[:, None, :]], axis=1
    )
    lines[bend] = shapely.linestrings(coords)
    ids = [f"T{k}" for k in range(len(lines))]
    return gpd.GeoDataFrame({"thrust_id": ids, "hw_side": "left"}, geometry=lines, crs="EPSG:32633")


def naive_ends(lines, tol):
    """Per end, per trace: nearest other trace within the tolerance (Python loop)."""
    found = 0
    for a, line in enumerate(lines):
        for end in (shapely.Point(line.coords[0]), shapely.Point(line.coords[-1])):
            best = None
            for b, other in enumerate(lines):
                if a != b:
                    d = end.distance(other)
                    if d <= tol and (best is None or d < best):
                        best = d
            found += best is not None
    return found


def naive_scan(scan, lines):
    count = 0
    for s in scan:
        for line in lines:
            if s.intersects(line):
                count += len(shapely.get_coordinates(s.intersection(line)))
    return count


def _time(f, *args, **kw):
    t0 = time.perf_counter()
    out = f(*args, **kw)
    return time.perf_counter() - t0, out


def run() -> None:
    small = make_network(20, 20)
    lines = np.asarray(small.geometry, dtype=object)
    sides = np.ones(len(lines), dtype=np.int8)
    t_naive, n_naive = _time(naive_ends, lines, 10.0)
    t_fast, topo = _time(build_topology, lines, sides, snap_tolerance=10.0)
    n_fast = int(np.isin(topo.nodes["kind"], ["branch", "truncation"]).sum())
    print(
        f"topology, {len(lines)} traces: naive {t_naive:.3f} s, STRtree {t_fast:.4f} s, "
        f"ratio {t_naive / t_fast:.0f}x (ends on a trace: {n_naive} vs {n_fast})"
    )
    area = shapely.box(*small.total_bounds)
    scan, _ = cast_scanlines(area, 90.0, (area.bounds[3] - area.bounds[1]) / 100)
    t_naive, c_naive = _time(naive_scan, scan, list(topo.pieces))
    t_fast, inter = _time(scanline_intersections, scan, topo.pieces, topo.piece_trace, 90.0)
    print(
        f"scanlines, {len(scan)} x {len(lines)} traces: naive {t_naive:.3f} s, vectorised "
        f"{t_fast:.4f} s, ratio {t_naive / t_fast:.0f}x (intersections: {c_naive} vs {len(inter)})"
    )

    big = make_network(100, 100)
    height = big.total_bounds[3] - big.total_bounds[1]
    t_all, result = _time(
        analyze_thrusts,
        big,
        transport_azimuth=90.0,
        azimuth_ref="grid",
        scanline_interval=height / 1000,
    )
    kinds = result.nodes["kind"].value_counts().to_dict()
    print(
        f"analyze_thrusts, {len(big)} traces, {result.scanlines['scanline'].nunique()} scanlines: "
        f"{t_all:.2f} s; {len(result.sheets)} sheets, {len(result.relations)} relations, nodes {kinds}"
    )
