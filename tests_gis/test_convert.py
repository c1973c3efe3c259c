"""In-memory conversion between the GIS's features and (Geo)DataFrames, both ways."""

import geopandas
import numpy as np
import pandas as pd
import pyproj
import pytest
import shapely
from gisdata import assert_frames_match


def _memory_layer(fields, features, wkb_type, crs):
    from qgis.core import QgsVectorLayer, QgsWkbTypes

    geometry = QgsWkbTypes.displayString(wkb_type) if wkb_type != QgsWkbTypes.NoGeometry else "None"
    layer = QgsVectorLayer(geometry, "converted", "memory")
    layer.setCrs(crs)
    provider = layer.dataProvider()
    assert provider.addAttributes(fields.toList())
    layer.updateFields()
    ok, _ = provider.addFeatures(features)
    assert ok
    return layer


def _round_trip(frame, geometry):
    from thrustmap_provider.convert import frame_to_features, source_to_frame

    fields, features, wkb_type, crs = frame_to_features(frame, geometry=geometry)
    layer = _memory_layer(fields, features, wkb_type, crs)
    back = source_to_frame(layer, geometry=geometry)
    del layer
    return back, wkb_type


def test_attribute_types_and_missing_values_survive(qgis_app):
    from qgis.core import QgsWkbTypes

    frame = geopandas.GeoDataFrame(
        {
            "count": np.array([1, 2, 3], dtype="int64"),
            "maybe_count": pd.array([4, None, 6], dtype="Int64"),
            "dip": [10.5, np.nan, 89.9],
            "overturned": [True, False, True],
            "station": ["A", None, "C"],
            "seen": pd.to_datetime(["2024-05-01 10:00", None, "2024-05-03 12:30"]),
        },
        geometry=[
            shapely.box(0, 0, 10, 10),
            shapely.MultiPolygon([shapely.box(20, 0, 30, 10), shapely.box(40, 0, 50, 10)]),
            None,
        ],
        crs="EPSG:32633",
    )
    back, wkb_type = _round_trip(frame, "polygon")
    assert wkb_type == QgsWkbTypes.MultiPolygon  # one multi part makes the layer multi
    assert back["count"].dtype == "int64"
    assert back["maybe_count"].dtype == "float64"  # an integer field with nulls reads as float
    assert back["overturned"].dtype == bool
    assert back.geometry.iloc[0].geom_type == "MultiPolygon"  # promoted to the layer's type
    assert_frames_match(back, frame.assign(maybe_count=[4.0, np.nan, 6.0]))


def test_z_coordinates_survive(qgis_app):
    from qgis.core import QgsWkbTypes

    frame = geopandas.GeoDataFrame(
        {"name": ["a", "b"]},
        geometry=shapely.points([[700000.0, 5080000.0, 412.25], [700100.0, 5080100.0, -3.5]]),
        crs="EPSG:32633",
    )
    back, wkb_type = _round_trip(frame, "point")
    assert wkb_type == QgsWkbTypes.PointZ
    np.testing.assert_array_equal(
        shapely.get_coordinates(back.geometry.array, include_z=True),
        shapely.get_coordinates(frame.geometry.array, include_z=True),
    )


def test_crs_without_authority_code_goes_through_wkt(qgis_app):
    custom = pyproj.CRS.from_proj4(
        "+proj=tmerc +lat_0=0 +lon_0=17.5 +k=0.9996 +x_0=500000 +y_0=0 +ellps=WGS84 +units=m"
    )
    assert custom.to_authority() is None
    frame = geopandas.GeoDataFrame({"v": [1]}, geometry=[shapely.Point(1, 2)], crs=custom)
    back, _ = _round_trip(frame, "point")
    assert back.crs.equals(custom, ignore_axis_order=True)
    origin = pyproj.Transformer.from_crs("EPSG:4326", back.crs, always_xy=True).transform(17.5, 0)
    assert origin == pytest.approx((500000.0, 0.0), abs=1e-6)  # false easting at the meridian


def test_table_and_empty_layer(qgis_app):
    from qgis.core import QgsWkbTypes

    table = pd.DataFrame({"younger": ["T2", "T3"], "older": ["T1", "T2"]})
    back, wkb_type = _round_trip(table, "table")
    assert wkb_type == QgsWkbTypes.NoGeometry
    assert type(back) is pd.DataFrame
    assert_frames_match(back, table)
    empty = geopandas.GeoDataFrame(
        {"v": pd.Series([], dtype="float64")}, geometry=[], crs="EPSG:32633"
    )
    back, wkb_type = _round_trip(empty, "line")
    assert wkb_type == QgsWkbTypes.LineString  # the declared geometry
    assert len(back) == 0 and list(back.columns) == ["v", "geometry"]


def test_m_values_are_dropped_on_the_way_in(qgis_app):
    from qgis.core import QgsFeature, QgsGeometry, QgsVectorLayer
    from thrustmap_provider.convert import source_to_frame

    layer = QgsVectorLayer("PointZM?crs=EPSG:32633", "measured", "memory")
    feature = QgsFeature(layer.fields())
    feature.setGeometry(QgsGeometry.fromWkt("PointZM (700000 5080000 412 7)"))
    layer.dataProvider().addFeatures([feature])
    frame = source_to_frame(layer, geometry="point")
    assert frame.geometry.iloc[0].wkt == "POINT Z (700000 5080000 412)"
    del layer
