"""Spacing along transport: scanlines, successive distances and their statistics.

References: pyproj ``Geod.inv`` (geodesic distance on WGS 84) and
``Proj.get_factors`` (scale factor of the projection) for geographic input;
numpy and scipy.stats.bootstrap (percentile method) for the statistics; the
regular sets have exact spacings by construction.
"""

import geopandas as gpd
import numpy as np
import pandas as pd
import pyproj
import pytest
import shapely
from scipy import stats
from shapely import LineString

from tests.thrust_networks import analyze_east, area, box, line, parallel_set, traces
from thrustmap.errors import ParameterError
from thrustmap.thrusts import analyze_thrusts
from thrustmap.thrusts.spacing import cast_scanlines, spacing_statistics


def test_regular_set_exact():
    result = analyze_east(
        parallel_set(5, spacing=1250.0), (-500, 0, 5500, 10000), scanline_interval=1000.0
    )
    sp = result.spacing.set_index("pair")
    assert sp.index.tolist() == ["T1-T2", "T2-T3", "T3-T4", "T4-T5", "all", "in_sequence"]
    assert sp["mean_m"].tolist() == pytest.approx([1250.0] * 6)
    assert sp["n"].tolist() == [10, 10, 10, 10, 40, 40]  # 10 scanlines across 10 km at 1 km
    assert sp["cv"].tolist() == pytest.approx([0.0] * 6)
    segs = result.scanlines
    assert segs["length_m"].tolist() == pytest.approx([1250.0] * 40)
    assert (segs.geometry.length == segs["length_m"]).all()


def test_oblique_transport_measures_along_transport():
    # thrusts striking 000 but transport given 30 degrees off the normal: spacing along
    # transport is the normal spacing / cos(30) (trigonometry of the construction)
    result = analyze_thrusts(
        parallel_set(3),
        study_area=area(box(-500, 0, 2500, 10000)),
        transport_azimuth=60.0,
        azimuth_ref="grid",
        scanline_interval=500.0,
    )
    row = result.spacing.set_index("pair").loc["all"]
    assert row["mean_m"] == pytest.approx(1000.0 / np.cos(np.radians(30.0)))


def test_irregular_set_within_five_percent_of_the_construction():
    rng = np.random.default_rng(3)
    rows = []
    for k in range(6):
        xs = k * 800.0 + rng.normal(0.0, 30.0, 21)  # wavy traces about 800 m apart
        rows.append(
            (f"T{k + 1}", line(*zip(xs, np.linspace(0, 20000, 21), strict=True)), "left", None)
        )
    result = analyze_east(traces(rows), (-400, 0, 4400, 20000), scanline_interval=200.0)
    assert result.spacing.set_index("pair").loc["all", "mean_m"] == pytest.approx(800.0, rel=0.05)


def test_statistics_against_numpy_and_scipy():
    values = np.array([812.0, 905.0, 1010.0, 1130.0, 870.0, 990.0, 1250.0, 760.0, 940.0, 1005.0])
    pairs = pd.DataFrame({"hinterland_thrust": "T1", "foreland_thrust": "T2", "length_m": values})
    s = spacing_statistics(pairs, seed=4, n_boot=20000).iloc[0]
    assert s["mean_m"] == pytest.approx(values.mean())
    assert s["median_m"] == pytest.approx(np.median(values))
    assert s["std_m"] == pytest.approx(values.std(ddof=1))
    assert s["cv"] == pytest.approx(values.std(ddof=1) / values.mean())
    ref = stats.bootstrap(
        (values,),
        np.mean,
        n_resamples=20000,
        method="percentile",
        confidence_level=0.95,
        random_state=np.random.default_rng(9),
    )
    width = ref.confidence_interval.high - ref.confidence_interval.low
    assert s["ci_low_m"] == pytest.approx(ref.confidence_interval.low, abs=0.05 * width)
    assert s["ci_high_m"] == pytest.approx(ref.confidence_interval.high, abs=0.05 * width)


def test_bootstrap_is_seeded():
    pairs = pd.DataFrame(
        {
            "hinterland_thrust": ["A"] * 5 + ["B"] * 4,
            "foreland_thrust": ["B"] * 5 + ["C"] * 4,
            "length_m": [1.0, 2.0, 4.0, 8.0, 3.0, 5.0, 6.0, 9.0, 2.0],
        }
    )
    a = spacing_statistics(pairs, seed=1)
    pd.testing.assert_frame_equal(a, spacing_statistics(pairs, seed=1))
    assert not a["ci_low_m"].equals(spacing_statistics(pairs, seed=2)["ci_low_m"])
    assert (a["ci_low_m"] <= a["mean_m"]).all() and (a["mean_m"] <= a["ci_high_m"]).all()


def test_single_distance_has_no_interval_and_empty_input_works():
    one = spacing_statistics(
        pd.DataFrame({"hinterland_thrust": ["A"], "foreland_thrust": ["B"], "length_m": [5.0]})
    )
    assert np.isnan(one["ci_low_m"]).all() and one["n"].tolist() == [1, 1]
    none = spacing_statistics(
        pd.DataFrame({"hinterland_thrust": [], "foreland_thrust": [], "length_m": []})
    )
    assert none["pair"].tolist() == ["all"] and none["n"].tolist() == [0]


@pytest.mark.parametrize("kw,msg", [({"n_boot": 0}, "n_boot"), ({"confidence": 1.5}, "confidence")])
def test_statistics_parameters(kw, msg):
    pairs = pd.DataFrame({"hinterland_thrust": ["A"], "foreland_thrust": ["B"], "length_m": [5.0]})
    with pytest.raises(ParameterError, match=msg):
        spacing_statistics(pairs, **kw)


def test_scanline_parameters():
    with pytest.raises(ParameterError, match="must be > 0"):
        cast_scanlines(shapely.box(0, 0, 10, 10), 90.0, 0.0)
    with pytest.raises(ParameterError, match="limit is 100000"):
        cast_scanlines(shapely.box(0, 0, 10, 1e7), 90.0, 0.01)


def test_geographic_input_distances_match_geodesics():
    """Meridian traces in EPSG:4326: distances in the local UTM match pyproj's geodesics."""
    lons = [14.60, 14.65, 14.70, 14.75]
    lat = np.linspace(45.0, 45.1, 51)
    gdf = gpd.GeoDataFrame(
        {"thrust_id": [f"T{k + 1}" for k in range(4)], "hw_side": "left"},
        geometry=[LineString(np.column_stack([np.full_like(lat, lo), lat])) for lo in lons],
        crs="EPSG:4326",
    )
    region = shapely.segmentize(shapely.box(14.55, 45.0, 14.80, 45.1), 0.002)
    result = analyze_thrusts(
        gdf,
        study_area=gpd.GeoSeries([region], crs=4326),
        transport_azimuth=90.0,
        scanline_interval=1000.0,
    )
    assert result.crs.to_epsg() == 32633
    geod = pyproj.Geod(ellps="WGS84")
    to_geo = pyproj.Transformer.from_crs(result.crs, 4326, always_xy=True)
    segs = result.scanlines
    xy = shapely.get_coordinates(segs.geometry.values).reshape(-1, 2, 2)
    lon0, lat0 = to_geo.transform(xy[:, 0, 0], xy[:, 0, 1])
    lon1, lat1 = to_geo.transform(xy[:, 1, 0], xy[:, 1, 1])
    _, _, geodesic = geod.inv(lon0, lat0, lon1, lat1)
    mid_lon, mid_lat = (lon0 + lon1) / 2, (lat0 + lat1) / 2
    k = (
        pyproj.Proj(result.crs).get_factors(mid_lon, mid_lat).meridional_scale
    )  # conformal: one scale
    ratio = segs["length_m"].to_numpy() / geodesic
    assert np.allclose(ratio, k, atol=2e-6)  # map distance = scale factor x geodesic distance
    k_all = (
        pyproj.Proj(result.crs)
        .get_factors(np.repeat(lons, 2), np.tile([45.0, 45.1], 4))
        .meridional_scale
    )
    scale_error = np.max(np.abs(k_all - 1.0)) + 1e-6
    assert np.all(np.abs(ratio - 1.0) <= scale_error)
    # independent check: 0.05 degrees of longitude along the 45.05 parallel (pyproj Geod.inv)
    _, _, expected = geod.inv(14.60, 45.05, 14.65, 45.05)
    mean = result.spacing.set_index("pair").loc["all", "mean_m"]
    assert mean == pytest.approx(expected, rel=scale_error + 1e-4)
