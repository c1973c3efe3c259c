"""ESRI ASCII grids: round trips, header errors and bilinear sampling.

Reference library: scipy.interpolate.RegularGridInterpolator (method "linear")
for bilinear interpolation between cell centres; pyproj for the CRS round trip.
The header layout (ncols, nrows, xllcorner/xllcenter, yllcorner/yllcenter,
cellsize, NODATA_value, northernmost row first) is the ESRI ASCII raster
format as documented by GDAL's "AAIGrid" driver page (common practice).
"""

import numpy as np
import pytest
from pyproj import CRS
from scipy.interpolate import RegularGridInterpolator

from thrustmap.errors import InputError, OutputExistsError, ParameterError
from thrustmap.io.grid import Grid, read_ascii_grid, write_ascii_grid


def _grid(crs="EPSG:32633"):
    rng = np.random.default_rng(1)
    values = rng.normal(500.0, 80.0, size=(7, 9))
    values[2, 3] = np.nan
    return Grid(values, x0=700000.0, y0=5110000.0, cell=200.0, crs=crs)


def test_round_trip_keeps_values_geometry_and_crs(tmp_path):
    g = _grid()
    write_ascii_grid(tmp_path / "dem.asc", g)
    back = read_ascii_grid(tmp_path / "dem.asc")
    assert np.array_equal(back.values, g.values, equal_nan=True)
    assert (back.x0, back.y0, back.cell) == (g.x0, g.y0, g.cell)
    assert back.crs.equals(CRS.from_epsg(32633))  # pyproj reads the ESRI WKT sidecar
    assert sorted(p.name for p in tmp_path.iterdir()) == ["dem.asc", "dem.prj"]


def test_round_trip_without_crs_writes_no_prj(tmp_path):
    write_ascii_grid(tmp_path / "dem.asc", _grid(crs=None))
    assert not (tmp_path / "dem.prj").exists()
    assert read_ascii_grid(tmp_path / "dem.asc").crs is None


def test_nodata_value_avoids_real_data(tmp_path):
    g = Grid([[-9999.0, np.nan]], x0=0, y0=10, cell=10)
    write_ascii_grid(tmp_path / "g.asc", g)
    back = read_ascii_grid(tmp_path / "g.asc")
    assert back.values[0, 0] == -9999.0 and np.isnan(back.values[0, 1])


def test_refuses_to_overwrite_and_leaves_no_temporary_files(tmp_path):
    path = tmp_path / "dem.asc"
    write_ascii_grid(path, _grid())
    before = path.read_text()
    with pytest.raises(OutputExistsError, match="dem.asc"):
        write_ascii_grid(path, Grid(np.ones((2, 2)), x0=0, y0=0, cell=1, crs="EPSG:32633"))
    assert path.read_text() == before
    write_ascii_grid(
        path, Grid(np.ones((2, 2)), x0=0, y0=2, cell=1, crs="EPSG:32633"), overwrite=True
    )
    assert read_ascii_grid(path).shape == (2, 2)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["dem.asc", "dem.prj"]


def test_cell_centre_header_equals_corner_header(tmp_path):
    # xllcenter/yllcenter name the centre of the lower-left cell (GDAL AAIGrid; common practice)
    (tmp_path / "a.asc").write_text(
        "ncols 2\nnrows 2\nxllcorner 100\nyllcorner 200\ncellsize 10\n1 2\n3 4\n"
    )
    (tmp_path / "b.asc").write_text(
        "NCOLS 2\nNROWS 2\nXLLCENTER 105\nYLLCENTER 205\nCELLSIZE 10\n1 2\n3 4\n"
    )
    a, b = read_ascii_grid(tmp_path / "a.asc"), read_ascii_grid(tmp_path / "b.asc")
    assert (a.x0, a.y0) == (b.x0, b.y0) == (100.0, 220.0)
    assert a.values.tolist() == [[1.0, 2.0], [3.0, 4.0]]


BAD_HEADERS = [
    ("ncols two\nnrows 1\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 2\n", "line 1.*must be a number"),
    ("ncols 2\nnrows 1.5\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 2\n", "line 2.*positive integer"),
    (
        "ncols 2\nnrows 1\nxllcorner 0\nyllcorner 0\ncellsize -5\n1 2\n",
        "line 5.*cellsize must be positive",
    ),
    (
        "ncols 2\nnrows 1\nxllcorner 0\nyllcorner 0\ncelsize 1\n1 2\n",
        "line 5.*unknown header key 'celsize'",
    ),
    ("ncols 2\nnrows 1\nxllcorner 0\nyllcorner 0\n1 2\n", "line 5.*lacks 'cellsize'"),
    (
        "ncols 2\nnrows 1\nxllcorner 0\nxllcenter 0\nyllcorner 0\ncellsize 1\n1 2\n",
        "exactly one of xllcorner",
    ),
    (
        "ncols 2\nncols 2\nnrows 1\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 2\n",
        "line 2.*given twice",
    ),
    (
        "ncols 2\nnrows 1 3\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 2\n",
        "line 2.*expected 'nrows <number>'",
    ),
    (
        "ncols 2\nnrows 2\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 2\n3\n",
        "expected nrows x ncols = 2 x 2 = 4 values.*found 3",
    ),
    ("ncols 2\nnrows 1\nxllcorner 0\nyllcorner 0\ncellsize 1\n1 x\n", "must be numbers"),
]


@pytest.mark.parametrize("text,match", BAD_HEADERS)
def test_malformed_files_name_file_and_line(tmp_path, text, match):
    path = tmp_path / "broken.asc"
    path.write_text(text)
    with pytest.raises(InputError, match=match) as info:
        read_ascii_grid(path)
    assert "broken.asc" in str(info.value)


def test_unreadable_prj_is_an_input_error(tmp_path):
    (tmp_path / "g.asc").write_text("ncols 1\nnrows 1\nxllcorner 0\nyllcorner 0\ncellsize 1\n5\n")
    (tmp_path / "g.prj").write_text("not a crs")
    with pytest.raises(InputError, match="g.prj"):
        read_ascii_grid(tmp_path / "g.asc")


@pytest.mark.parametrize(
    "values,cell",
    [
        (np.zeros(3), 1.0),
        (np.zeros((0, 2)), 1.0),
        (np.zeros((2, 2)), 0.0),
        (np.zeros((2, 2)), -1.0),
    ],
)
def test_invalid_grid_parameters(values, cell):
    with pytest.raises(ParameterError):
        Grid(values, x0=0, y0=0, cell=cell)


def test_sample_matches_scipy_bilinear_between_cell_centres():
    g = _grid()
    g.values[np.isnan(g.values)] = 0.0
    rng = np.random.default_rng(5)
    x = rng.uniform(g.x_centers[0], g.x_centers[-1], 500)
    y = rng.uniform(g.y_centers[-1], g.y_centers[0], 500)
    # Reference: scipy RegularGridInterpolator, linear on a rectilinear grid (axes ascending).
    ref = RegularGridInterpolator((g.y_centers[::-1], g.x_centers), g.values[::-1], method="linear")
    assert np.allclose(g.sample(x, y), ref(np.column_stack([y, x])), rtol=0, atol=1e-9)


def test_sample_edges_nodata_and_outside():
    g = Grid([[0.0, 10.0], [20.0, np.nan]], x0=0, y0=20, cell=10)
    xs = np.array([1.0, 5.0, 15.0, -0.1, 20.1, 5.0])
    ys = np.array([19.0, 15.0, 5.0, 10.0, 10.0, 20.0])
    out = g.sample(xs, ys)
    # within half a cell of the edge the edge cell value holds; NaN neighbours and outside give NaN
    assert out[0] == 0.0 and out[1] == 0.0 and out[5] == 0.0
    assert np.isnan(out[2]) and np.isnan(out[3]) and np.isnan(out[4])
    assert g.sample(np.full((2, 3), 5.0), 15.0).shape == (2, 3)


def test_single_cell_grid_samples_its_value():
    g = Grid([[7.0]], x0=0, y0=10, cell=10)
    assert g.sample([0.0, 5.0, 10.0], [0.0, 5.0, 10.0]).tolist() == [7.0, 7.0, 7.0]
