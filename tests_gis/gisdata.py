"""Small invented (synthetic) inputs for the desktop-GIS tests, and frame comparison.

The layers are written with pyogrio to one GeoPackage that both the GIS and
plain Python read, so the two paths start from the same bytes.
"""

from pathlib import Path

import geopandas
import numpy as np
import pandas as pd
import pyogrio
import shapely

CRS = "EPSG:32633"

# Synthetic: two domains of opposite-dipping bedding, a small third domain
# holding one station, and one station outside every domain.
_DOMAINS = {
    "D1": (700000.0, 5080000.0, 705000.0, 5085000.0),
    "D2": (705000.0, 5080000.0, 710000.0, 5085000.0),
    "D3": (700000.0, 5085000.0, 701000.0, 5086000.0),
}


def write_inputs(path: Path) -> Path:
    """Write layers ``stations`` (point), ``domains`` (polygon) and ``coords`` (table)."""
    rng = np.random.default_rng(8)
    n = 13
    x = np.concatenate(
        [rng.uniform(700200, 704800, 6), rng.uniform(705200, 709800, 5), [700500, 712000]]
    )
    y = np.concatenate([rng.uniform(5080200, 5084800, 11), [5085500, 5081000]])
    dd = np.concatenate([rng.normal(120, 8, 6), rng.normal(300, 8, 5), [40.0, 200.0]]) % 360
    dip = np.concatenate([rng.normal(30, 4, 6), rng.normal(45, 4, 5), [10.0, 80.0]])
    stations = geopandas.GeoDataFrame(
        {
            "station": [f"ST{i:02d}" for i in range(n)],
            "dip_direction": dd.round(1),
            "dip": dip.round(1),
            "strike": ((dd - 90) % 360).round(1),
            "n_obs": np.arange(n, dtype="int64") % 4 + 1,
            "checked": np.arange(n) % 3 == 0,
            "note": [None if i % 4 == 1 else f"synthetic note {i}" for i in range(n)],
        },
        geometry=shapely.points(x, y),
        crs=CRS,
    )
    domains = geopandas.GeoDataFrame(
        {"domain": list(_DOMAINS)},
        geometry=[shapely.box(*b) for b in _DOMAINS.values()],
        crs=CRS,
    )
    coords = pd.DataFrame(
        {
            "name": ["P1", "P2", "P3", "P4"],
            "x": [701000.0, 706000.5, 715000.0, 700999.25],
            "y": [5081000.0, 5084999.0, 5081000.0, 5085500.75],
            "elevation": [412.5, np.nan, 390.0, 455.0],
        }
    )
    path.unlink(missing_ok=True)
    pyogrio.write_dataframe(stations, path, layer="stations")
    pyogrio.write_dataframe(domains, path, layer="domains", append=True)
    pyogrio.write_dataframe(coords, path, layer="coords", append=True)
    return path


def read_layer(path, layer=None, *, table=False):
    """A layer as plain Python reads it (pyogrio); a DataFrame for a table."""
    frame = pyogrio.read_dataframe(path, layer=layer, read_geometry=not table)
    if table and isinstance(frame, geopandas.GeoDataFrame):
        frame = pd.DataFrame(frame.drop(columns=frame.geometry.name))
    return frame


_MULTI = {
    "Point": shapely.MultiPoint,
    "LineString": shapely.MultiLineString,
    "Polygon": shapely.MultiPolygon,
}


def _promoted(geometries):
    """Single parts as one-part multis: a GIS layer holding multis stores singles that way."""
    if not any(g is not None and g.geom_type.startswith("Multi") for g in geometries):
        return geometries
    return np.array(
        [
            _MULTI[g.geom_type]([g]) if g is not None and g.geom_type in _MULTI else g
            for g in geometries
        ],
        dtype=object,
    )


def assert_frames_match(got, expected, *, what=""):
    """Same rows, columns, values (NaN and None alike), geometries and CRS.

    A single part equals its one-part multi (see ``frame_to_features``).
    """
    label = f"{what}: " if what else ""
    assert len(got) == len(expected), f"{label}{len(got)} rows, expected {len(expected)}"
    spatial = isinstance(expected, geopandas.GeoDataFrame)
    columns = [c for c in expected.columns if not (spatial and c == expected.geometry.name)]
    got_columns = [
        c
        for c in got.columns
        if not (isinstance(got, geopandas.GeoDataFrame) and c == got.geometry.name)
    ]
    assert got_columns == [str(c) for c in columns], f"{label}columns {got_columns} != {columns}"
    for column in columns:
        a, b = got[str(column)], expected[column]
        missing_a, missing_b = a.isna().to_numpy(), b.isna().to_numpy()
        assert (missing_a == missing_b).all(), f"{label}{column}: missing values differ"
        a, b = a[~missing_a], b[~missing_b]
        if pd.api.types.is_numeric_dtype(b) and not pd.api.types.is_bool_dtype(b):
            np.testing.assert_allclose(
                a.to_numpy(dtype=float),
                b.to_numpy(dtype=float),
                rtol=1e-12,
                atol=1e-9,
                err_msg=f"{label}{column}",
            )
        else:
            assert a.tolist() == b.tolist(), f"{label}{column}: {a.tolist()} != {b.tolist()}"
    if spatial:
        assert isinstance(got, geopandas.GeoDataFrame), f"{label}no geometry"
        assert got.crs == expected.crs, f"{label}CRS {got.crs} != {expected.crs}"
        ga = _promoted(np.asarray(got.geometry.array, dtype=object))
        gb = _promoted(np.asarray(expected.geometry.array, dtype=object))
        same = shapely.equals_exact(ga, gb, tolerance=1e-6) | (
            shapely.is_missing(ga) & shapely.is_missing(gb)
        )
        assert same.all(), f"{label}geometries differ at rows {np.flatnonzero(~same).tolist()}"
