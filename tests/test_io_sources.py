"""Reading inputs (read_source) per format and engine, and atomic writing."""

import os

import geopandas as gpd
import pandas as pd
import pyogrio
import pyproj
import pytest
import shapely

from thrustmap.errors import CRSError, InputError, OutputExistsError, SourceNotFoundError
from thrustmap.io.atomic import atomic_paths, write_file
from thrustmap.io.sources import is_projected_metric, read_source, split_source, working_crs
from thrustmap.io.write import write_layers


def _points(crs="EPSG:4326"):
    return gpd.GeoDataFrame(
        {"station": ["A", "B"], "dip": [30.0, 45.0]},
        geometry=shapely.points([[15.0, 45.0], [15.1, 45.1]]),
        crs=crs,
    )


@pytest.mark.parametrize(
    ("suffix", "driver"), [(".gpkg", "GPKG"), (".geojson", "GeoJSON"), (".shp", "ESRI Shapefile")]
)
@pytest.mark.parametrize("engine", ["pyogrio", "fiona"])
def test_vector_sources_written_by_either_engine(tmp_path, suffix, driver, engine):
    path = tmp_path / f"stations{suffix}"
    _points().to_file(path, driver=driver, engine=engine)
    frame = read_source(path)
    assert isinstance(frame, gpd.GeoDataFrame)
    assert frame["station"].tolist() == ["A", "B"]
    assert frame.crs.to_epsg() == 4326
    assert frame.attrs["source"] == str(path)


def test_reprojection_to_the_working_crs_matches_pyproj(tmp_path):
    from pyproj import Transformer

    path = tmp_path / "s.gpkg"
    _points().to_file(path, layer="stations", engine="pyogrio")
    frame = read_source(f"{path}:stations", to_crs="EPSG:32633")
    # Reference: pyproj's own transformation of the same coordinates.
    x, y = Transformer.from_crs(4326, 32633, always_xy=True).transform([15.0, 15.1], [45.0, 45.1])
    assert frame.crs.to_epsg() == 32633
    assert frame.geometry.x.tolist() == pytest.approx(list(x), abs=1e-6)
    assert frame.geometry.y.tolist() == pytest.approx(list(y), abs=1e-6)
    assert frame.attrs["layer"] == "stations"


def test_missing_crs_is_filled_from_the_declared_one(tmp_path):
    shp = tmp_path / "nocrs.shp"
    with pytest.warns(UserWarning, match="'crs' was not provided"):
        pyogrio.write_dataframe(
            gpd.GeoDataFrame({"a": [1]}, geometry=[shapely.Point(700000, 5080000)]), shp
        )
    assert read_source(shp).crs is None
    assert read_source(shp, crs="EPSG:32633").crs.to_epsg() == 32633
    assert read_source(shp, to_crs="EPSG:32633").crs.to_epsg() == 32633


def test_csv_is_read_as_strings_without_losing_anything(tmp_path):
    path = tmp_path / "sheet.csv"
    path.write_text("stn,dip,attitude\n007,45,030/45\nB,,NA\n")
    frame = read_source(path, crs="EPSG:4326")
    assert frame.values.tolist() == [["007", "45", "030/45"], ["B", "", "NA"]]
    assert frame.attrs == {"source": str(path), "layer": None, "crs": "EPSG:4326"}


def test_tsv_and_sniffed_txt(tmp_path):
    (tmp_path / "a.tsv").write_text("a\tb\n1\t2\n")
    (tmp_path / "a.txt").write_text("a;b\n1;2\n")
    assert read_source(tmp_path / "a.tsv").columns.tolist() == ["a", "b"]
    assert read_source(tmp_path / "a.txt").values.tolist() == [["1", "2"]]


def test_spreadsheet_sheets_are_layers(tmp_path):
    path = tmp_path / "book.xlsx"
    with pd.ExcelWriter(path) as book:
        pd.DataFrame({"stn": ["A"], "dip": [45]}).to_excel(book, sheet_name="day1", index=False)
        pd.DataFrame({"stn": ["B"], "dip": [30]}).to_excel(book, sheet_name="day2", index=False)
    assert read_source(path).values.tolist() == [["A", "45"]]
    second = read_source(f"{path}:day2")
    assert second.values.tolist() == [["B", "30"]] and second.attrs["layer"] == "day2"
    assert read_source(path, layer="day2").attrs["layer"] == "day2"
    with pytest.raises(InputError, match=r"layer day3: no such sheet; sheets are: day1, day2"):
        read_source(path, layer="day3")


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("a.gpkg:stations", ("a.gpkg", "stations")),
        ("a.gpkg", ("a.gpkg", None)),
        ("dir/a.gpkg:thrust_traces", ("dir/a.gpkg", "thrust_traces")),
        ("a:b/c.gpkg", ("a:b/c.gpkg", None)),  # a colon in a folder name is not a layer
    ],
)
def test_split_source(text, expected):
    path, layer = split_source(text)
    assert (str(path), layer) == expected


def test_existing_file_with_a_colon_is_a_path(tmp_path):
    path = tmp_path / "odd:name.csv"
    path.write_text("a\n1\n")
    assert split_source(str(path)) == (path, None)


@pytest.mark.parametrize(
    ("make", "error", "message"),
    [
        (lambda d: d / "absent.gpkg", SourceNotFoundError, r"absent.gpkg: not found"),
        (
            lambda d: _write(d / "junk.gpkg", "not a geopackage"),
            InputError,
            r"junk.gpkg: cannot open",
        ),
        (
            lambda d: _write(d / "a.csv", "a\n1\n") + ":layer",
            InputError,
            r"delimited text file has no layers",
        ),
        (
            lambda d: _write(d / "empty.csv", ""),
            InputError,
            r"empty.csv: cannot read as a delimited table",
        ),
    ],
)
def test_unreadable_sources(tmp_path, make, error, message):
    with pytest.raises(error, match=message):
        read_source(make(tmp_path))


def _write(path, text):
    path.write_text(text)
    return str(path)


def test_working_crs_must_be_projected():
    assert working_crs("EPSG:32633").is_projected
    with pytest.raises(CRSError, match="is not projected"):
        working_crs("EPSG:4326")
    with pytest.raises(CRSError, match="unknown CRS 'nonsense'"):
        working_crs("nonsense")


@pytest.mark.parametrize(
    ("crs", "expected"),
    [("EPSG:32633", True), ("EPSG:2227", False), ("EPSG:4326", False)],
)
def test_projected_metric_crs(crs, expected):
    # Axis units as pyproj reports them: UTM 33N in metres, California zone 3 in US
    # survey feet, WGS 84 geographic in degrees.
    assert is_projected_metric(pyproj.CRS(crs)) is expected


def test_geopackage_is_written_atomically_and_not_overwritten(tmp_path):
    out = tmp_path / "sub" / "run.gpkg"
    table = pd.DataFrame({"pair": ["T1-T2"], "metres": [812.5]})
    write_layers(out, {"points": _points(), "spacing": table})
    assert pyogrio.list_layers(out)[:, 0].tolist() == ["points", "spacing"]
    assert gpd.read_file(out, layer="spacing", engine="fiona")["metres"].tolist() == [812.5]
    with pytest.raises(OutputExistsError, match="run.gpkg exists"):
        write_layers(out, {"spacing": table})
    write_layers(out, {"spacing": table}, overwrite=True, keep_layers=False)
    assert pyogrio.list_layers(out)[:, 0].tolist() == ["spacing"]
    assert os.listdir(out.parent) == ["run.gpkg"]  # no temporary file left


def test_failed_write_leaves_the_old_file(tmp_path):
    target = tmp_path / "figure.png"
    target.write_bytes(b"old")

    def explode(path):
        path.write_bytes(b"half")
        raise RuntimeError("disk full")

    with pytest.raises(RuntimeError, match="disk full"):
        write_file(target, explode, overwrite=True)
    assert target.read_bytes() == b"old"
    assert os.listdir(tmp_path) == ["figure.png"]


def test_writer_sees_the_final_suffix(tmp_path):
    seen = []
    write_file(tmp_path / "map.html", lambda path: seen.append(path.suffix) or path.write_text("x"))
    assert seen == [".html"]
    with atomic_paths(tmp_path / "b.bin") as (tmp,):
        tmp.write_bytes(b"\x00")
    assert (tmp_path / "b.bin").read_bytes() == b"\x00"
