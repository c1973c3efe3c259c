"""Atomic layer writing: drivers x engines, tables, overwrite rules, failure half-way."""

import hashlib

import geopandas as gpd
import pandas as pd
import pyogrio
import pytest

import thrustmap.io.write as write_mod
from thrustmap.errors import OutputExistsError, ParameterError
from thrustmap.io.write import write_layers

ENGINES = ["pyogrio", "fiona"]


@pytest.fixture(params=ENGINES)
def engine(request):
    return request.param


def _points(n=3, offset=0.0):
    return gpd.GeoDataFrame(
        {"name": [f"p{i}" for i in range(n)], "dip": [10.0 + i + offset for i in range(n)]},
        geometry=gpd.points_from_xy([700_000.0 + 10 * i for i in range(n)], [5_090_000.0] * n),
        crs="EPSG:32633",
    )


def _digest(path):
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.mark.parametrize("name", ["out.gpkg", "out.geojson", "out.shp"])
def test_round_trip_per_driver(tmp_path, engine, name):
    path = tmp_path / name
    pts = _points()
    assert write_layers(path, {"points": pts}, engine=engine) == path
    back = gpd.read_file(path, engine=engine)
    assert back.crs == pts.crs
    assert back["name"].tolist() == pts["name"].tolist()
    assert back["dip"].tolist() == pts["dip"].tolist()
    assert back.geometry.x.tolist() == pts.geometry.x.tolist()
    # Nothing but the output (and shapefile sidecars) is left in the folder.
    assert {p.stem for p in tmp_path.iterdir()} == {"out"}


def test_geopackage_layers_and_tables(tmp_path, engine):
    path = tmp_path / "run.gpkg"
    table = pd.DataFrame({"reason": ["dip_out_of_range", "duplicate_row"], "count": [2, 1]})
    write_layers(path, {"points": _points(), "counts": table}, engine=engine)
    listed = dict(pyogrio.list_layers(path))
    assert listed == {"points": "Point", "counts": None}
    back = gpd.read_file(path, layer="counts", engine=engine)
    assert "geometry" not in back.columns
    assert back["reason"].tolist() == table["reason"].tolist()
    assert back["count"].tolist() == [2, 1]


def test_refuses_to_overwrite(tmp_path):
    path = tmp_path / "run.gpkg"
    write_layers(path, {"points": _points()})
    before = _digest(path)
    with pytest.raises(OutputExistsError, match="overwrite=True"):
        write_layers(path, {"points": _points(1)})
    assert _digest(path) == before


def test_overwrite_replaces_named_layers_and_keeps_others(tmp_path, engine):
    path = tmp_path / "run.gpkg"
    write_layers(path, {"points": _points(3), "keep": _points(2)}, engine=engine)
    write_layers(
        path, {"points": _points(1, offset=5.0), "new": _points(4)}, overwrite=True, engine=engine
    )
    assert set(dict(pyogrio.list_layers(path))) == {"points", "keep", "new"}
    assert gpd.read_file(path, layer="points")["dip"].tolist() == [15.0]
    assert len(gpd.read_file(path, layer="keep")) == 2
    assert len(gpd.read_file(path, layer="new")) == 4


def test_overwrite_shapefile_removes_stale_sidecars(tmp_path):
    path = tmp_path / "pts.shp"
    write_layers(path, {"pts": _points(3)})
    stale = path.with_suffix(".qix")
    stale.write_bytes(b"old spatial index")
    write_layers(path, {"pts": _points(1)}, overwrite=True)
    assert not stale.exists()
    assert len(gpd.read_file(path)) == 1


def test_failure_half_way_leaves_earlier_file_unchanged(tmp_path, monkeypatch, engine):
    path = tmp_path / "run.gpkg"
    write_layers(path, {"points": _points(3)}, engine=engine)
    before = _digest(path)
    real = write_mod._write_one
    calls = []

    def fail_on_second(*args, **kwargs):
        calls.append(args[1])
        if len(calls) == 2:
            raise RuntimeError("disk full")
        return real(*args, **kwargs)

    monkeypatch.setattr(write_mod, "_write_one", fail_on_second)
    with pytest.raises(RuntimeError, match="disk full"):
        write_layers(
            path, {"points": _points(1), "other": _points(2)}, overwrite=True, engine=engine
        )
    assert calls == ["points", "other"]
    assert _digest(path) == before
    assert len(gpd.read_file(path, layer="points")) == 3
    assert [p.name for p in tmp_path.iterdir()] == ["run.gpkg"]


def test_failure_on_a_new_file_leaves_nothing(tmp_path, monkeypatch):
    def boom(*args, **kwargs):
        raise RuntimeError("cannot write")

    monkeypatch.setattr(write_mod, "_write_one", boom)
    with pytest.raises(RuntimeError):
        write_layers(tmp_path / "new.geojson", {"a": _points()})
    assert list(tmp_path.iterdir()) == []


def test_driver_given_whatever_the_extension(tmp_path, engine):
    path = tmp_path / "run.txt"
    assert write_layers(path, {"points": _points()}, driver="GeoJSON", engine=engine) == path
    assert pyogrio.read_info(path)["driver"] == "GeoJSON"  # pyogrio reads the file
    assert [p.name for p in tmp_path.iterdir()] == ["run.txt"]


def test_creates_missing_folders(tmp_path):
    path = tmp_path / "out" / "nested" / "run.gpkg"
    write_layers(path, {"points": _points()})
    assert path.exists()


@pytest.mark.parametrize(
    ("name", "layers", "kwargs", "match"),
    [
        (
            "run.csv",
            {"a": _points()},
            {},
            r"unknown extension '\.csv'; use one of \.geojson, \.gpkg",
        ),
        ("run.gpkg", {}, {}, "no layers given"),
        (
            "run.geojson",
            {"a": _points(), "b": _points()},
            {},
            "GeoJSON holds one layer, got 2 \\(a, b\\)",
        ),
        ("run.shp", {"a": _points(), "b": _points()}, {}, "use a .gpkg file"),
        (
            "run.gpkg",
            {"a": _points()},
            {"engine": "gdal"},
            "engine='gdal' is not valid; choose one of pyogrio, fiona",
        ),
        (
            "run.gpkg",
            {"a": _points()},
            {"driver": "CSV"},
            "driver='CSV' is not valid; use one of ESRI Shapefile, GPKG, GeoJSON",
        ),
    ],
)
def test_parameter_errors(tmp_path, name, layers, kwargs, match):
    with pytest.raises(ParameterError, match=match):
        write_layers(tmp_path / name, layers, **kwargs)
    assert list(tmp_path.iterdir()) == []
