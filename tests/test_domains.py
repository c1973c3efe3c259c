"""Domains: spatial and attribute assignment, and per-domain statistics layers.

The fold geometry checks use the synthetic folds of tests/synthetic_folds.py
(known axis and interlimb angle, Fisher 1953 noise); the
layers are written through the real GeoPackage engines (pyogrio and fiona).
"""

import geopandas as gpd
import numpy as np
import pandas as pd
import pytest
import shapely
from shapely import box

from tests.synthetic_folds import synthetic_fold
from thrustmap import domains as dm
from thrustmap.errors import CRSError, InputError, ThrustmapWarning
from thrustmap.io.vocabulary import LINE_FEATURES
from thrustmap.orientation import angle_between_lines, dip_direction_to_strike

CRS = "EPSG:32633"


def attitudes(rows, crs=CRS):
    """An attitude table in the shape of the data contract from (x, y, feature, a, b, overturned)."""
    x, y, feature, a, b, over = (list(c) for c in zip(*rows, strict=True))
    kind = ["line" if f in LINE_FEATURES else "plane" for f in feature]
    a, b = np.asarray(a, float), np.asarray(b, float)
    is_plane = np.array([k == "plane" for k in kind])
    dd = np.where(is_plane, a, np.nan)
    df = pd.DataFrame(
        {
            "source_row": np.arange(1, len(rows) + 1),
            "station": [f"S{i}" for i in range(len(rows))],
            "feature": feature,
            "kind": kind,
            "dip_direction": dd,
            "dip": np.where(is_plane, b, np.nan),
            "strike": dip_direction_to_strike(dd),
            "trend": np.where(is_plane, np.nan, a),
            "plunge": np.where(is_plane, np.nan, b),
            "sense": "",
            "overturned": over,
            "azimuth_ref": "true",
            "convergence": 2.0,
            "flags": "",
        }
    )
    return gpd.GeoDataFrame(df, geometry=gpd.points_from_xy(x, y), crs=crs)


def two_domains():
    return gpd.GeoDataFrame(
        {"domain": ["D1", "D2"]},
        geometry=[box(700000, 5080000, 710000, 5090000), box(710000, 5080000, 720000, 5090000)],
        crs=CRS,
    )


def fold_rows(seed, x0, n=60, **kw):
    dd, dip, over, truth = synthetic_fold(seed, n=n, **kw)
    rng = np.random.default_rng(seed)
    x = x0 + rng.uniform(500, 9500, n)
    y = 5080000 + rng.uniform(500, 9500, n)
    return list(zip(x, y, ["bedding"] * n, dd, dip, over, strict=True)), truth


# ------------------------------------------------------------------ assignment


def test_polygon_join_inside_outside_and_boundary():
    att = attitudes(
        [
            (705000, 5085000, "bedding", 90, 30, False),
            (715000, 5085000, "bedding", 90, 30, False),
            (730000, 5085000, "bedding", 90, 30, False),
            (710000, 5085000, "bedding", 90, 30, False),  # on the shared edge
        ]
    )
    out = dm.domains_from_polygons(att, two_domains())
    assert out["domain"].tolist() == ["D1", "D2", "unassigned", "D1"]
    assert len(out) == len(att)
    assert list(out.columns[:-1]) == list(att.columns)


def test_polygons_reprojected_and_crs_required():
    att = attitudes([(705000, 5085000, "bedding", 90, 30, False)])
    geographic = two_domains().to_crs("EPSG:4326")
    assert dm.domains_from_polygons(att, geographic)["domain"].tolist() == ["D1"]
    with pytest.raises(CRSError, match="no CRS"):
        dm.domains_from_polygons(att, two_domains().set_crs(None, allow_override=True))


def test_overlapping_domains_named():
    polys = gpd.GeoDataFrame(
        {"domain": ["D1", "D2", "D3"]},
        geometry=[box(0, 0, 10, 10), box(20, 0, 30, 10), box(8, 0, 22, 10)],
        crs=CRS,
    )
    att = attitudes([(5, 5, "bedding", 90, 30, False)])
    with pytest.raises(InputError, match=r"'D1' \(row 1\) and 'D3' \(row 3\)"):
        dm.domains_from_polygons(att, polys)


def test_same_domain_in_parts_may_overlap_and_touch():
    polys = gpd.GeoDataFrame(
        {"domain": ["D1", "D1", "D2"]},
        geometry=[box(0, 0, 10, 10), box(5, 0, 15, 10), box(15, 0, 20, 10)],
        crs=CRS,
    )
    att = attitudes([(12, 5, "bedding", 90, 30, False), (17, 5, "bedding", 90, 30, False)])
    assert dm.domains_from_polygons(att, polys)["domain"].tolist() == ["D1", "D2"]


def test_thrust_sheets_by_their_id_column():
    sheets = two_domains().rename(columns={"domain": "sheet_id"})
    sheets["sheet_id"] = ["S1", "S2"]
    att = attitudes([(715000, 5085000, "bedding", 90, 30, False)])
    out = dm.domains_from_polygons(att, sheets, id_column="sheet_id", layer="thrust_sheets")
    assert out["domain"].tolist() == ["S2"]


def test_invalid_polygon_repaired_with_warning():
    bowtie = shapely.Polygon([(0, 0), (10, 10), (10, 0), (0, 10)])
    polys = gpd.GeoDataFrame({"domain": ["D1"]}, geometry=[bowtie], crs=CRS)
    att = attitudes([(8, 5, "bedding", 90, 30, False)])
    with pytest.warns(ThrustmapWarning, match="repaired"):
        out = dm.domains_from_polygons(att, polys)
    assert out["domain"].tolist() == ["D1"]


@pytest.mark.parametrize(
    "ids,geom,match",
    [
        (["D1", None], None, "row 2.*no id"),
        (["D1", "unassigned"], None, "reserved"),
        (["D1", "D2"], shapely.LineString([(0, 0), (1, 1)]), "row 2.*must be polygons"),
    ],
)
def test_bad_domain_layers(ids, geom, match):
    polys = two_domains()
    polys["domain"] = ids
    if geom is not None:
        polys.loc[1, "geometry"] = geom
    att = attitudes([(705000, 5085000, "bedding", 90, 30, False)])
    with pytest.raises(InputError, match=match):
        dm.domains_from_polygons(att, polys)


def test_missing_id_column():
    att = attitudes([(705000, 5085000, "bedding", 90, 30, False)])
    with pytest.raises(InputError, match="no id column 'zone'.*domain"):
        dm.domains_from_polygons(att, two_domains(), id_column="zone")


def test_attribute_assignment_keeps_existing_column():
    att = attitudes([(0, 0, "bedding", 90, 30, False)] * 3)
    att["zone"] = ["A", "", None]
    att["domain"] = ["old1", "old2", "old3"]
    out = dm.domains_from_attribute(att, "zone")
    assert out["domain"].tolist() == ["A", "unassigned", "unassigned"]
    assert out["orig_domain"].tolist() == ["old1", "old2", "old3"]
    with pytest.raises(InputError, match="no column 'nope'"):
        dm.domains_from_attribute(att, "nope")


# ------------------------------------------------------------------ statistics


def test_domain_statistics_layers():
    rows1, truth1 = fold_rows(1, 700000)
    rows2, truth2 = fold_rows(2, 710000)
    extra = [
        (705000, 5085000, "cleavage", 100, 80, False),
        (705100, 5085000, "cleavage", 102, 78, False),
        (705200, 5085000, "cleavage", 98, 82, False),
        (715000, 5085000, "lineation", 20, 10, False),
        (715000, 5085100, "lineation", 22, 12, False),
        (705000, 5085500, "hinge_line", truth1[0], truth1[1], False),
        (730000, 5085000, "bedding", 10, 10, False),  # outside both domains
    ]
    att = attitudes(rows1 + rows2 + extra)
    res = dm.domain_statistics(att, two_domains(), n_boot=200, seed=1)
    d = res.domains.set_index("domain")
    assert list(d.index) == ["D1", "D2"]
    assert res.domains.crs == att.crs
    assert d.loc["D1", "fold_status"] == "ok"
    assert d.loc["D1", "bedding_n"] == 60 and d.loc["D1", "cleavage_n"] == 3
    assert d.loc["D1", "cleavage_mean_dip_direction"] == pytest.approx(100, abs=1)
    assert d.loc["D2", "lineation_mean_trend"] == pytest.approx(21, abs=1)
    assert "not unimodal" in d.loc["D1", "notes"]  # folded bedding is bimodal
    assert d.loc["D1", "hinge_n"] == 1 and d.loc["D2", "hinge_n"] == 0
    assert res.unassigned == 1
    assert shapely.equals(d.loc["D1", "geometry"], two_domains().geometry[0])
    fa = res.fold_axes.set_index("domain")
    for name, truth in (("D1", truth1), ("D2", truth2)):
        assert (
            angle_between_lines(
                fa.loc[name, "axis_trend"], fa.loc[name, "axis_plunge"], truth[0], truth[1]
            )
            < 3 * fa.loc[name, "cone95"]
        )
        assert fa.loc[name, "interlimb_angle"] == pytest.approx(truth[2], abs=5)
        assert two_domains().geometry[0 if name == "D1" else 1].contains(fa.loc[name, "geometry"])
        # grid north = true north - convergence (2 degrees here)
        assert (
            fa.loc[name, "axis_trend"] - fa.loc[name, "axis_trend_grid"]
        ) % 360 == pytest.approx(2.0)
    assert set(res.fits) == {"D1", "D2"}
    assert (fa["azimuth_ref"] == "true").all()


def test_domain_statistics_degenerate_and_missing_bedding():
    rows = [(705000 + i, 5085000, "bedding", 120, 35, False) for i in range(6)]
    rows += [(715000 + i, 5085000, "cleavage", 120, 80 + i % 2, False) for i in range(6)]
    res = dm.domain_statistics(attitudes(rows), two_domains(), n_boot=0)
    d = res.domains.set_index("domain")
    assert d.loc["D1", "fold_status"] == "degenerate"
    assert "axis is undefined" in d.loc["D1", "notes"]
    assert d.loc["D2", "fold_status"] == "no bedding"
    assert len(res.fold_axes) == 0
    assert list(res.fold_axes.columns[:2]) == ["domain", "n"]


def test_domain_statistics_by_attribute_and_all():
    rows, truth = fold_rows(3, 700000)
    att = attitudes(rows)
    att["zone"] = "north"
    res = dm.domain_statistics(att, id_column="zone", n_boot=0)
    assert res.domains["domain"].tolist() == ["north"]
    assert res.domains.geometry[0].geom_type == "Polygon"
    assert res.domains.geometry[0].contains(res.fold_axes.geometry[0]) or res.domains.geometry[
        0
    ].touches(res.fold_axes.geometry[0])
    whole = dm.domain_statistics(att.drop(columns="zone"), n_boot=0)
    assert whole.domains["domain"].tolist() == ["all"]
    assert whole.fold_axes["axis_trend"][0] == pytest.approx(res.fold_axes["axis_trend"][0])


def test_incomplete_rows_are_noted():
    rows, _ = fold_rows(4, 700000, n=20)
    att = attitudes(rows)
    att.loc[3, "dip"] = np.nan
    res = dm.domain_statistics(att, two_domains(), n_boot=0)
    d = res.domains.set_index("domain")
    assert d.loc["D1", "bedding_n"] == 19
    assert "1 attitude(s) without a complete orientation" in d.loc["D1", "notes"]


def test_missing_columns():
    att = attitudes([(0, 0, "bedding", 90, 30, False)]).drop(columns=["kind"])
    with pytest.raises(InputError, match="lack column.*kind"):
        dm.domain_statistics(att)


@pytest.mark.parametrize("engine", ["pyogrio", "fiona"])
def test_layers_write_to_geopackage(tmp_path, engine):
    rows, _ = fold_rows(5, 700000)
    res = dm.domain_statistics(attitudes(rows), two_domains(), n_boot=50)
    path = tmp_path / "run.gpkg"
    res.domains.to_file(path, layer="domains", driver="GPKG", engine=engine)
    res.fold_axes.to_file(path, layer="fold_axes", driver="GPKG", engine=engine)
    back = gpd.read_file(path, layer="fold_axes", engine=engine)
    assert back["axis_trend"][0] == pytest.approx(res.fold_axes["axis_trend"][0])
    assert back["tightness"][0] == res.fold_axes["tightness"][0]
    dom = gpd.read_file(path, layer="domains", engine=engine)
    assert dom["domain"].tolist() == ["D1", "D2"]
