"""Run GeoPackage with provenance, sidecar, GeoJSON and Shapefile exports, atomicity."""

from __future__ import annotations

import hashlib
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import geopandas as gpd
import numpy as np
import pandas as pd
import pyogrio
import pytest
import shapely
from pyproj import Transformer

import thrustmap
from tests.deliver_data import CRS, attitudes, domains, rejected, thrust_traces
from thrustmap.errors import CRSError, InputError, OutputExistsError
from thrustmap.io.exports import (
    check_layers,
    shapefile_field_names,
    write_geojson_layers,
    write_shapefile_layers,
)
from thrustmap.io.write import write_layers
from thrustmap.provenance import (
    Provenance,
    file_sha256,
    make_provenance,
    read_provenance,
    sidecar_path,
    write_run,
)

ENGINES = ["pyogrio", "fiona"]


def _layers():
    return {
        "attitudes": attitudes(),
        "attitudes_rejected": rejected(),
        "domains": domains(),
        "thrust_traces": thrust_traces(),
        "fold_axes": None,
        "spacing": pd.DataFrame({"pair": ["T1-T2"], "spacing_m": [2500.0]}),
    }


@pytest.fixture
def inputs(tmp_path):
    a = tmp_path / "stations.csv"
    a.write_bytes(b"abc")
    b = tmp_path / "traces.gpkg"
    b.write_bytes(b"")
    return [a, b]


def test_sha256_matches_published_digests(inputs):
    # NIST FIPS 180-2 (2002), Secure Hash Standard, Appendix B.1: SHA-256("abc").
    assert file_sha256(inputs[0]) == (
        "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
    )
    # SHA-256 of the empty message, as printed by `sha256sum /dev/null` (common practice).
    assert file_sha256(inputs[1]).startswith("e3b0c44298fc1c149afbf4c8996fb924")


def test_provenance_record_fields(inputs):
    prov = make_provenance(
        inputs=inputs,
        tools=[("fit_fold", {"method": "girdle", "min_n": np.int64(5), "path": Path("a")})],
        created_utc=pd.Timestamp("2024-03-01 12:30:00").to_pydatetime(),
    )
    assert prov.thrustmap_version == thrustmap.__version__
    assert prov.created_utc == "2024-03-01T12:30:00Z"
    assert prov.tools[0].params == {"method": "girdle", "min_n": 5, "path": "a"}
    assert [i.name for i in prov.inputs] == ["stations.csv", "traces.gpkg"]
    assert prov.inputs[0].bytes == 3
    assert Provenance.from_dict(json.loads(json.dumps(prov.to_dict()))) == prov
    assert Provenance.from_table(prov.to_table()) == prov


def test_missing_input_file_is_named(tmp_path):
    with pytest.raises(InputError, match="nowhere.csv"):
        make_provenance(inputs=[tmp_path / "nowhere.csv"])


@pytest.mark.parametrize("engine", ENGINES)
def test_run_geopackage_round_trip(tmp_path, inputs, engine):
    prov = make_provenance(inputs=inputs, tools=[("ingest", {"azimuth_ref": "magnetic"})])
    layers = _layers()
    out = write_run(tmp_path / "run.gpkg", layers, provenance=prov)
    gpkg = out["geopackage"]
    names = set(pyogrio.list_layers(gpkg)[:, 0])
    assert names == {"attitudes", "attitudes_rejected", "domains", "thrust_traces", "spacing",
                     "provenance"}
    expected_types = {"attitudes": "Point", "domains": "Polygon", "thrust_traces": "LineString"}
    for name, geom_type in expected_types.items():
        back = gpd.read_file(gpkg, layer=name, engine=engine)
        assert back.crs.to_epsg() == 32633
        assert set(back.geom_type) == {geom_type}
        assert len(back) == len(layers[name])
    back = gpd.read_file(gpkg, layer="attitudes", engine=engine)
    assert back["note"].tolist() == layers["attitudes"]["note"].tolist()
    assert np.allclose(back.geometry.x, layers["attitudes"].geometry.x)
    table = gpd.read_file(gpkg, layer="attitudes_rejected", engine=engine)
    assert table["reason"].tolist() == ["dip_out_of_range", "unparsable_attitude"]
    assert read_provenance(gpkg) == prov


def test_sidecar_ties_to_geopackage(tmp_path, inputs):
    prov = make_provenance(inputs=inputs)
    out = write_run(tmp_path / "run.gpkg", _layers(), provenance=prov)
    assert out["sidecar"] == sidecar_path(out["geopackage"])
    side = json.loads(out["sidecar"].read_text(encoding="utf-8"))
    assert side["provenance"] == prov.to_dict()
    assert side["geopackage"]["sha256"] == hashlib.sha256(out["geopackage"].read_bytes()).hexdigest()
    assert side["layers"]["attitudes"] == {"rows": 8, "geometry_types": ["Point"], "crs": CRS}
    assert side["not_produced"] == ["fold_axes"]


def test_refuses_to_overwrite_and_reserved_names(tmp_path):
    prov = make_provenance()
    path = tmp_path / "run.gpkg"
    write_run(path, {"attitudes": attitudes()}, provenance=prov)
    with pytest.raises(OutputExistsError, match="overwrite"):
        write_run(path, {"attitudes": attitudes()}, provenance=prov)
    with pytest.raises(InputError, match="reserved"):
        write_run(path, {"provenance": rejected()}, provenance=prov, overwrite=True)
    with pytest.raises(InputError, match="layer bad name.*got 'bad name'"):
        write_run(path, {"bad name": rejected()}, provenance=prov, overwrite=True)
    with pytest.raises(CRSError, match="layer attitudes.*no CRS"):
        check_layers({"attitudes": attitudes().set_crs(None, allow_override=True)}, source="x")


def test_failure_half_way_leaves_previous_file(tmp_path):
    path = tmp_path / "run.gpkg"
    write_run(path, {"attitudes": attitudes()}, provenance=make_provenance())
    before = path.read_bytes()
    # The GeoPackage driver has no duration type: the second layer fails after the first is written.
    bad = pd.DataFrame({"elapsed": pd.to_timedelta([1, 2], unit="s")})
    with pytest.raises(InputError, match="layer late_table, field 'elapsed'.*cannot store"):
        write_run(path, {"attitudes": attitudes(20), "late_table": bad},
                  provenance=make_provenance(), overwrite=True)
    with pytest.raises(InputError, match="layer late_table, field 'elapsed'"):
        write_layers(path, {"attitudes": attitudes(20), "late_table": bad}, overwrite=True)
    assert path.read_bytes() == before
    assert len(gpd.read_file(path, layer="attitudes")) == 8
    assert [p.name for p in tmp_path.iterdir()] == [p.name for p in tmp_path.iterdir()
                                                    if not p.name.startswith(".")]


_CHILD = """
import sys, geopandas as gpd, numpy as np, shapely
from thrustmap.provenance import make_provenance, write_run
n = 200_000
pts = gpd.GeoDataFrame({"v": np.arange(n, dtype=float), "s": ["x" * 20] * n},
                       geometry=shapely.points(np.arange(n) + 7e5, np.full(n, 5.09e6)),
                       crs="EPSG:32633")
write_run(sys.argv[1], {"big1": pts, "big2": pts}, provenance=make_provenance(), overwrite=True)
"""


def _size(path: Path) -> int:
    try:
        return path.stat().st_size
    except FileNotFoundError:  # renamed into place meanwhile
        return 0


def test_killed_write_leaves_previous_file(tmp_path):
    path = tmp_path / "run.gpkg"
    write_run(path, {"attitudes": attitudes()}, provenance=make_provenance())
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [str(Path(thrustmap.__file__).parents[1]), os.environ.get("PYTHONPATH", "")]))
    child = subprocess.Popen([sys.executable, "-c", _CHILD, str(path)], env=env)
    deadline = time.monotonic() + 120
    temp = []
    while time.monotonic() < deadline and child.poll() is None:
        # the writer stages the new GeoPackage in a hidden folder beside the target
        temp = [p for p in tmp_path.glob(".*/run.gpkg") if _size(p) > 0]
        if temp:
            break
        time.sleep(0.005)
    assert child.poll() is None, "the writer finished before it could be killed"
    os.kill(child.pid, signal.SIGKILL)
    child.wait()
    assert temp, "no temporary GeoPackage seen while writing"
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before
    for engine in ENGINES:
        assert len(gpd.read_file(path, layer="attitudes", engine=engine)) == 8
    assert read_provenance(path).thrustmap_version == thrustmap.__version__


def test_geojson_is_rfc7946(tmp_path):
    layers = _layers()
    out = write_run(tmp_path / "run.gpkg", layers, provenance=make_provenance(),
                    geojson_dir=tmp_path / "geojson")
    files = {k.split(":", 1)[1]: v for k, v in out.items() if k.startswith("geojson:")}
    # Attribute tables have no geometry and stay in the GeoPackage only.
    assert set(files) == {"attitudes", "domains", "thrust_traces"}
    doc = json.loads(files["attitudes"].read_text(encoding="utf-8"))
    # Butler et al. (2016), RFC 7946 "The GeoJSON Format", sections 3.1.1 and 4: WGS 84,
    # longitude then latitude, and no "crs" member.
    assert "crs" not in doc
    coords = np.array([f["geometry"]["coordinates"] for f in doc["features"]])
    src = layers["attitudes"].geometry
    lon, lat = Transformer.from_crs(CRS, "EPSG:4326", always_xy=True).transform(src.x, src.y)
    assert np.allclose(coords[:, 0], lon, atol=1e-6)  # reference: pyproj
    assert np.allclose(coords[:, 1], lat, atol=1e-6)
    assert 17 < coords[:, 0].min() and coords[:, 1].min() > 45  # lon ~18.5, lat ~46 here
    # RFC 7946 section 3.1.6: exterior rings counterclockwise.
    poly = json.loads(files["domains"].read_text(encoding="utf-8"))["features"][0]
    ring = shapely.LinearRing(poly["geometry"]["coordinates"][0])
    assert ring.is_ccw
    for engine in ENGINES:
        back = gpd.read_file(files["thrust_traces"], engine=engine)
        assert back.crs.to_epsg() == 4326 and len(back) == 3


@pytest.mark.parametrize("engine", ENGINES)
def test_shapefile_export(tmp_path, engine):
    out = write_shapefile_layers(tmp_path, {"attitudes": attitudes(), "spacing": rejected()})
    assert set(out) == {"attitudes"}
    back = gpd.read_file(out["attitudes"], engine=engine)
    assert back.crs.to_epsg() == 32633 and len(back) == 8
    names = json.loads((tmp_path / "fieldnames.json").read_text(encoding="utf-8"))
    assert names["attitudes"]["dip_direct"] == "dip_direction"
    assert np.allclose(back["dip_direct"], attitudes()["dip_direction"], equal_nan=True)
    assert all(len(c) <= 10 for c in back.columns)  # dBASE III field-name limit (common practice)
    with pytest.raises(OutputExistsError):
        write_shapefile_layers(tmp_path, {"attitudes": attitudes()})


def test_shapefile_field_names_unique():
    names = shapefile_field_names(["abcdefghijkl", "abcdefghijXX", "abcdefghij", "x"])
    assert len(set(v.lower() for v in names.values())) == 4
    assert all(len(v) <= 10 for v in names.values())
    assert names["x"] == "x"


def test_geojson_refuses_existing(tmp_path):
    write_geojson_layers(tmp_path, {"domains": domains()})
    with pytest.raises(OutputExistsError):
        write_geojson_layers(tmp_path, {"domains": domains()})
