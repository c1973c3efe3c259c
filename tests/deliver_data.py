"""Small hand-made layers in the CONTRACT schemas, for the deliverable tests.

Working CRS EPSG:32633 (UTM 33N). The stations sit east of the central
meridian (15 E) near 18.5 E, where grid north is about 2.5 degrees east of
true north, so a symbol drawn with grid azimuths would be visibly rotated.
"""

from __future__ import annotations

import geopandas as gpd
import numpy as np
import pandas as pd
import shapely

from thrustmap.io.grid import Grid

CRS = "EPSG:32633"
X0, Y0 = 770000.0, 5100000.0


def attitudes(n: int = 8) -> gpd.GeoDataFrame:
    """Accepted attitudes: inclined, horizontal, vertical, overturned planes and lines."""
    base = [
        # station, feature, kind, dip_direction, dip, trend, plunge, overturned, note
        ("S1", "bedding", "plane", 90.0, 30.0, np.nan, np.nan, False, "east-dipping bed"),
        ("S2", "bedding", "plane", 0.0, 0.0, np.nan, np.nan, False, "flat"),
        ("S3", "bedding", "plane", 270.0, 90.0, np.nan, np.nan, False, ""),
        ("S4", "bedding", "plane", 200.0, 70.0, np.nan, np.nan, True, "overturned limb"),
        ("S5", "cleavage", "plane", 315.0, 60.0, np.nan, np.nan, False, "<script>alert(1)</script>"),
        ("S6", "fault", "plane", 45.0, 50.0, 60.0, 45.0, False, "slickensides"),
        ("S7", "hinge_line", "line", np.nan, np.nan, 120.0, 15.0, False, ""),
        ("S8", "lineation", "line", np.nan, np.nan, 300.0, 0.0, False, ""),
    ]
    rows = [base[i % len(base)] for i in range(n)]
    frame = pd.DataFrame(
        rows,
        columns=[
            "station", "feature", "kind", "dip_direction", "dip", "trend", "plunge",
            "overturned", "note",
        ],
    )
    frame["source_row"] = np.arange(1, n + 1)
    frame["strike"] = (frame["dip_direction"] - 90.0) % 360.0
    frame["sense"] = ["reverse" if f == "fault" else "" for f in frame["feature"]]
    frame["azimuth_ref"] = "true"
    frame["flags"] = ["dip_zero" if d == 0 else "" for d in frame["dip"]]
    angle = np.arange(n) * 2.399963  # golden-angle spiral keeps stations apart
    radius = 400.0 * np.sqrt(np.arange(n) + 0.5)
    geometry = shapely.points(X0 + radius * np.cos(angle), Y0 + radius * np.sin(angle))
    return gpd.GeoDataFrame(frame, geometry=geometry, crs=CRS)


def rejected() -> pd.DataFrame:
    """Rejected rows, as ingest reports them."""
    return pd.DataFrame(
        {
            "source_row": [3, 9],
            "reason": ["dip_out_of_range", "unparsable_attitude"],
            "field": ["attitude", "attitude"],
            "value": ["120/95", "N4OE"],
            "message": ["dip 95 is above 90", "cannot read 'N4OE'"],
        }
    )


def thrust_traces() -> gpd.GeoDataFrame:
    """Three thrust traces, digitised northwards; one out of sequence, one unranked."""
    lines = [
        shapely.LineString([(X0 - 3000, Y0 - 5000), (X0 - 2500, Y0), (X0 - 3000, Y0 + 5000)]),
        shapely.LineString([(X0, Y0 - 5000), (X0 + 300, Y0 + 5000)]),
        shapely.LineString([(X0 + 3000, Y0 - 5000), (X0 + 3200, Y0 + 5000)]),
    ]
    return gpd.GeoDataFrame(
        {
            "thrust_id": ["T1", "T2", "T3"],
            "name": ["Rear thrust", "Middle <b>thrust</b>", "Front thrust"],
            "hw_side": ["left", "left", None],
            "hw_dip_direction": [np.nan, np.nan, 265.0],
            "dip": [30.0, 35.0, 25.0],
            "rank": [1, 3, 2],
            "out_of_sequence": [False, True, False],
        },
        geometry=lines,
        crs=CRS,
    )


def domains() -> gpd.GeoDataFrame:
    """Two domains with a few statistics columns."""
    west = shapely.box(X0 - 6000, Y0 - 6000, X0, Y0 + 6000)
    east = shapely.box(X0, Y0 - 6000, X0 + 6000, Y0 + 6000)
    return gpd.GeoDataFrame(
        {
            "domain": ["D1", "D2"],
            "n": [24, 31],
            "mean_dip_direction": [92.4, 271.8],
            "mean_dip": [31.2, 44.9],
            "fisher_k": [18.3, 25.1],
            "alpha95": [7.1, 5.2],
        },
        geometry=[west, east],
        crs=CRS,
    )


def sheets() -> gpd.GeoDataFrame:
    """Two thrust sheets between the traces."""
    return gpd.GeoDataFrame(
        {"sheet": ["S-T1", "S-T2"], "thrust_id": ["T1", "T2"], "area_km2": [30.0, 28.5]},
        geometry=[
            shapely.box(X0 - 5500, Y0 - 5000, X0 - 2800, Y0 + 5000),
            shapely.box(X0 - 2500, Y0 - 5000, X0, Y0 + 5000),
        ],
        crs=CRS,
    )


def fold_axes() -> gpd.GeoDataFrame:
    """One fold axis per domain, at the domain centre."""
    return gpd.GeoDataFrame(
        {
            "domain": ["D1", "D2"],
            "trend": [175.0, 5.0],
            "plunge": [12.0, 0.0],
            "interlimb_angle": [95.0, 62.0],
            "fold_class": ["open", "close"],
        },
        geometry=shapely.points([X0 - 3000, X0 + 3000], [Y0 + 2000, Y0 + 2000]),
        crs=CRS,
    )


def elevation(nx: int = 120, ny: int = 100, cell: float = 100.0) -> Grid:
    """A ridge-and-valley surface with a NaN corner (nodata)."""
    x = np.arange(nx) * cell
    y = np.arange(ny) * cell
    xx, yy = np.meshgrid(x, y)
    z = 800.0 + 300.0 * np.sin(xx / 1800.0) * np.cos(yy / 2500.0) + 0.02 * yy
    z[:8, :8] = np.nan
    return Grid(z, X0 - nx * cell / 2, Y0 + ny * cell / 2, cell, CRS)
