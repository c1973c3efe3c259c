"""Small hand-made thrust networks with known answers, shared by the thrust tests.

Coordinates are metres in EPSG:32633 (WGS 84 / UTM 33N) relative to an origin
east of the central meridian, so grid and true north differ by about 2 degrees.
"""

import geopandas as gpd
import numpy as np
import pandas as pd
import shapely
from shapely import LineString, Point

CRS = "EPSG:32633"
X0, Y0 = 700000.0, 5080000.0


def line(*pts):
    """LineString from (dx, dy) offsets in metres from the origin."""
    return LineString([(X0 + x, Y0 + y) for x, y in pts])


def box(x1, y1, x2, y2):
    """Study-area rectangle from offsets in metres."""
    return shapely.box(X0 + x1, Y0 + y1, X0 + x2, Y0 + y2)


def traces(rows, crs=CRS):
    """GeoDataFrame of the thrust_traces contract from (thrust_id, geometry, hw_side, hw_dip_direction)."""
    ids, geoms, sides, azs = zip(*rows, strict=True)
    return gpd.GeoDataFrame(
        {
            "thrust_id": list(ids),
            "name": [f"thrust {i}" for i in ids],
            "hw_side": list(sides),
            "hw_dip_direction": [np.nan if a is None else a for a in azs],
            "dip": 30.0,
        },
        geometry=list(geoms),
        crs=crs,
    )


def area(geom, crs=CRS):
    """study_area layer with one polygon."""
    return gpd.GeoDataFrame({"name": ["synthetic area"]}, geometry=[geom], crs=crs)


def attitudes(rows, crs=CRS):
    """Attitude table (contract columns) from (dx, dy, feature, kind, dip_direction, dip, trend, plunge, sense)."""
    cols = ["dx", "dy", "feature", "kind", "dip_direction", "dip", "trend", "plunge", "sense"]
    df = pd.DataFrame(rows, columns=cols)
    df["strike"] = (df["dip_direction"] - 90.0) % 360.0
    df["overturned"] = False
    df["source_row"] = np.arange(1, len(df) + 1)
    geom = [Point(X0 + x, Y0 + y) for x, y in zip(df.pop("dx"), df.pop("dy"), strict=True)]
    return gpd.GeoDataFrame(df, geometry=geom, crs=crs)


def parallel_set(n=4, spacing=1000.0, length=10000.0, side="left", reverse=()):
    """n north-south thrusts ``spacing`` metres apart, hanging walls to the west (dipping west).

    Traces are digitised south to north (hanging wall on the left) except the
    indices in ``reverse``, digitised north to south (hanging wall on the right).
    """
    rows = []
    for k in range(n):
        x = k * spacing
        if k in reverse:
            rows.append(
                (
                    f"T{k + 1}",
                    line((x, length), (x, 0)),
                    "right" if side == "left" else "left",
                    None,
                )
            )
        else:
            rows.append((f"T{k + 1}", line((x, 0), (x, length)), side, None))
    return traces(rows)


def analyze_east(gdf, extent, **kw):
    """analyze_thrusts with transport due east (grid) in the study area ``extent`` (offsets)."""
    from thrustmap.thrusts import analyze_thrusts

    options = {"transport_azimuth": 90.0, "azimuth_ref": "grid", "scanline_interval": 500.0, **kw}
    return analyze_thrusts(gdf, study_area=area(box(*extent)), **options)
