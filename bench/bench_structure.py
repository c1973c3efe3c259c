"""Fold fit, Fisher statistics and density beside mplstereonet, in the same process.

Sizes: ``THRUSTMAP_BENCH_SIZES`` (comma-separated, e.g. ``1e4,1e5``) or the
quick sizes when ``THRUSTMAP_BENCH_QUICK`` is set; otherwise 10^4, 10^5, 10^6.
The density is timed at 10^5 poles on a 100 x 100 grid (10^4 when quick).
Times are the best of a few repeats; ratios are reference time / our time.
"""

from __future__ import annotations

import os
import time

import mplstereonet
import numpy as np

from thrustmap.folds import fit_fold
from thrustmap.orientation import (
    dip_direction_to_strike,
    line_to_vector,
    normal_to_plane,
    vector_to_line,
)
from thrustmap.stats import density, fisher_stats

FULL = (10_000, 100_000, 1_000_000)
QUICK = (1_000, 10_000)
TARGET_FOLD_FISHER = 5.0  # at 10^6
TARGET_DENSITY = 30.0  # at 10^5 poles, 100 x 100


def _sizes() -> tuple[int, ...]:
    text = os.environ.get("THRUSTMAP_BENCH_SIZES")
    if text:
        return tuple(int(float(v)) for v in text.split(","))
    return QUICK if os.environ.get("THRUSTMAP_BENCH_QUICK") else FULL


def _race(ours, ref, repeat: int) -> tuple[float, object, float, object]:
    """Best times of two functions run alternately (so both meet the same machine load)."""
    best = [float("inf"), float("inf")]
    out: list[object] = [None, None]
    for _ in range(repeat):
        for i, fn in enumerate((ours, ref)):
            start = time.perf_counter()
            out[i] = fn()
            best[i] = min(best[i], time.perf_counter() - start)
    return best[0], out[0], best[1], out[1]


def _girdle(n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Bedding of a cylindrical fold with noise: dip directions and dips."""
    rng = np.random.default_rng(seed)
    axis = line_to_vector(35.0, 20.0)
    hinge = np.array([0.0, 0.0, 1.0]) - axis[2] * axis
    hinge /= np.linalg.norm(hinge)
    side = np.cross(axis, hinge)
    psi = np.radians(rng.choice([-50.0, 50.0], n) + rng.normal(0, 10, n))
    normals = np.cos(psi)[:, None] * hinge + np.sin(psi)[:, None] * side
    normals += rng.normal(0, 0.05, (n, 3))
    return normal_to_plane(normals)


def _cluster(n: int, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Lines about a steep mean (so that axial and directional means coincide)."""
    rng = np.random.default_rng(seed)
    x = line_to_vector(120.0, 60.0) + rng.normal(0, 0.15, (n, 3))
    return vector_to_line(x)


def _angle(trend1: float, plunge1: float, trend2: float, plunge2: float) -> float:
    """Angle between two axes, degrees, accurate near 0 (atan2 of cross and dot)."""
    u, v = line_to_vector(trend1, plunge1), line_to_vector(trend2, plunge2)
    return float(np.degrees(np.arctan2(np.linalg.norm(np.cross(u, v)), abs(float(u @ v)))))


def _line(label: str, n: int, ours: float, ref: float, agree: str) -> float:
    ratio = ref / ours
    print(
        f"{label:<22} N={n:>9,}  thrustmap {ours * 1e3:9.1f} ms  mplstereonet {ref * 1e3:9.1f} ms"
        f"  ratio {ratio:6.1f}x  {agree}",
        flush=True,
    )
    return ratio


def _verdict(ratio: float, target: float, where: str) -> None:
    print(f"{'':<22} target >= {target:.0f}x {where}: {'met' if ratio >= target else 'NOT met'}")


def bench_fold(n: int, repeat: int) -> float:
    """fit_fold (no bootstrap) against mplstereonet.fit_girdle; the axes must agree."""
    dd, dip = _girdle(n, seed=n)
    strike = dip_direction_to_strike(dd)
    ours, fit, ref, (s, d) = _race(
        lambda: fit_fold(dd, dip, n_boot=0),
        lambda: mplstereonet.fit_girdle(strike.copy(), dip.copy()),
        repeat,
    )
    plunge, bearing = mplstereonet.pole2plunge_bearing(s, d)
    miss = _angle(fit.axis_trend, fit.axis_plunge, bearing[0], plunge[0])
    assert miss < 1e-6, f"fold axis differs from fit_girdle by {miss} degrees"
    return _line("fold fit (pi-girdle)", n, ours, ref, f"axis agrees ({miss:.1e} deg)")


def bench_fisher(n: int, repeat: int) -> float:
    """fisher_stats against mplstereonet.find_fisher_stats; mean, k and alpha95 must agree."""
    trend, plunge = _cluster(n, seed=n + 1)
    ours, st, ref, ((mp, mb), (_, angle, kappa)) = _race(
        lambda: fisher_stats(trend, plunge),
        lambda: mplstereonet.find_fisher_stats(plunge.copy(), trend.copy()),
        repeat,
    )
    miss = _angle(st.mean_trend, st.mean_plunge, mb, mp)
    assert miss < 1e-6, f"Fisher mean differs by {miss} degrees"
    assert abs(st.k / kappa - 1) < 1e-9 and abs(st.alpha / angle - 1) < 1e-9, "k or alpha95 differ"
    return _line("Fisher statistics", n, ours, ref, f"mean, k, alpha95 agree ({miss:.1e} deg)")


def bench_density(n: int) -> float:
    """density against mplstereonet.density_grid (exponential Kamb, 100 x 100)."""
    rng = np.random.default_rng(7)
    trend = rng.uniform(0, 360, n)
    plunge = np.degrees(np.arcsin(rng.uniform(0, 1, n)))
    ours, grid, _, _ = _race(lambda: density(trend, plunge, gridsize=100), lambda: None, 3)
    start = time.perf_counter()
    _, _, z = mplstereonet.density_grid(
        plunge.copy(), trend.copy(), measurement="lines", gridsize=100
    )
    ref = time.perf_counter() - start
    z = np.where(z <= np.finfo(float).tiny, 0.0, z)
    pos = z > 0
    rel = float(np.max(np.abs(grid.values[pos] - z[pos]) / z[pos])) if pos.any() else 0.0
    assert rel <= 1e-6 and np.array_equal(grid.values == 0, z == 0), f"density differs ({rel:.1e})"
    return _line("density (exp. Kamb)", n, ours, ref, f"grid agrees (max rel {rel:.1e})")


def run() -> None:
    """Print the ratios; raise AssertionError when an answer disagrees with the reference."""
    sizes = _sizes()
    for n in sizes:
        repeat = 5 if n <= 100_000 else 3
        fold = bench_fold(n, repeat)
        if n >= 1_000_000:
            _verdict(fold, TARGET_FOLD_FISHER, "at 10^6")
        fisher = bench_fisher(n, repeat)
        if n >= 1_000_000:
            _verdict(fisher, TARGET_FOLD_FISHER, "at 10^6")
    quick = bool(os.environ.get("THRUSTMAP_BENCH_QUICK"))
    n = 10_000 if quick else 100_000
    _verdict(
        bench_density(n), TARGET_DENSITY, "at 10^5 poles" + (" (quick run: 10^4)" if quick else "")
    )
    n = sizes[0]
    dd, dip = _girdle(n, seed=3)
    start = time.perf_counter()
    fit_fold(dd, dip, n_boot=1000)
    t = time.perf_counter() - start
    print(
        f"{'bootstrap cone':<22} N={n:>9,}  thrustmap {t * 1e3:9.1f} ms  (1000 resamples; no reference)"
    )
