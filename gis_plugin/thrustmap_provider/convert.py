"""Features of the GIS to (Geo)DataFrames and back, in memory (WKB, attributes, CRS).

Per-feature loops are unavoidable here: the GIS hands features over one by one.
The table work stays column-wise.
"""

import geopandas
import numpy as np
import pandas as pd
import pyproj
import shapely
from qgis.core import (
    QgsCoordinateReferenceSystem,
    QgsFeature,
    QgsFeatureRequest,
    QgsField,
    QgsFields,
    QgsGeometry,
    QgsWkbTypes,
)
from qgis.PyQt.QtCore import QDate, QDateTime, QTime, QVariant

__all__ = ["source_to_frame", "frame_to_features", "to_pyproj_crs", "to_qgis_crs"]

_INTEGER_TYPES = {QVariant.Int, QVariant.LongLong, QVariant.UInt, QVariant.ULongLong}

# Declared geometry of an empty or unknown output -> the sink's geometry type.
DECLARED_WKB = {
    "point": QgsWkbTypes.Point,
    "line": QgsWkbTypes.LineString,
    "polygon": QgsWkbTypes.Polygon,
    "table": QgsWkbTypes.NoGeometry,
    "any": QgsWkbTypes.Unknown,
}

# shapely type id -> (family, single type, multi type)
_SHAPELY_WKB = {
    0: ("point", QgsWkbTypes.Point, QgsWkbTypes.MultiPoint),
    4: ("point", QgsWkbTypes.MultiPoint, QgsWkbTypes.MultiPoint),
    1: ("line", QgsWkbTypes.LineString, QgsWkbTypes.MultiLineString),
    2: ("line", QgsWkbTypes.LineString, QgsWkbTypes.MultiLineString),
    5: ("line", QgsWkbTypes.MultiLineString, QgsWkbTypes.MultiLineString),
    3: ("polygon", QgsWkbTypes.Polygon, QgsWkbTypes.MultiPolygon),
    6: ("polygon", QgsWkbTypes.MultiPolygon, QgsWkbTypes.MultiPolygon),
}


def to_pyproj_crs(crs):
    """The pyproj CRS of a GIS CRS (by authority code when pyproj knows it, else WKT); None if invalid."""
    if not crs.isValid():
        return None
    authid = crs.authid()
    if authid:
        try:
            return pyproj.CRS.from_user_input(authid)
        except pyproj.exceptions.CRSError:
            pass
    return pyproj.CRS.from_wkt(crs.toWkt(QgsCoordinateReferenceSystem.WKT_PREFERRED))


def to_qgis_crs(crs):
    """The GIS CRS of a pyproj CRS (or anything pyproj reads); an invalid CRS for None."""
    if crs is None:
        return QgsCoordinateReferenceSystem()
    crs = pyproj.CRS.from_user_input(crs)
    authority = crs.to_authority(min_confidence=100)
    if authority is not None:
        found = QgsCoordinateReferenceSystem(f"{authority[0]}:{authority[1]}")
        if found.isValid():
            return found
    return QgsCoordinateReferenceSystem.fromWkt(crs.to_wkt())


def _plain(value):
    """A GIS attribute value as a plain Python value (NULL -> None)."""
    if isinstance(value, QVariant):
        return None if value.isNull() else value.value()
    if isinstance(value, QDateTime):
        return value.toPyDateTime() if value.isValid() else None
    if isinstance(value, QDate):
        return value.toPyDate() if value.isValid() else None
    if isinstance(value, QTime):
        return value.toPyTime() if value.isValid() else None
    return value


def _column(values, qtype):
    """One attribute column as a pandas Series typed like the GIS field."""
    values = [_plain(v) for v in values]
    has_null = any(v is None for v in values)
    if qtype in _INTEGER_TYPES:
        if has_null:
            return pd.Series([np.nan if v is None else v for v in values], dtype="float64")
        return pd.Series(values, dtype="int64")
    if qtype == QVariant.Double:
        return pd.Series([np.nan if v is None else v for v in values], dtype="float64")
    if qtype == QVariant.Bool and not has_null:
        return pd.Series(values, dtype="bool")
    if qtype in (QVariant.Date, QVariant.DateTime):
        return pd.Series(pd.to_datetime(values))
    return pd.Series(values, dtype="object")


def _geometry_wkb(feature, drop_m):
    if not feature.hasGeometry():
        return None
    geometry = feature.geometry()
    if drop_m:
        part = geometry.constGet().clone()
        part.dropMValue()
        geometry = QgsGeometry(part)
    return bytes(geometry.asWkb())


def source_to_frame(
    source, *, geometry, skip_fields=(), to_crs=None, transform_context=None, feedback=None
):
    """Read a GIS feature source into a GeoDataFrame, or a DataFrame for ``geometry="table"``.

    Parameters
    ----------
    source : QgsFeatureSource
        The GIS's features (a layer or a processing feature source).
    geometry : str
        Declared geometry of the tool input; ``"table"``, or a source without
        geometry, gives a plain DataFrame.
    skip_fields : iterable of str
        Field names to leave out (the data provider's own feature-id key).
    to_crs : QgsCoordinateReferenceSystem, optional
        Reproject the geometries to this CRS with the GIS's own transformation
        (``transform_context``, the project's datum choices); a source without a
        valid CRS is taken to be in it.
    transform_context : QgsCoordinateTransformContext, optional
    feedback : QgsProcessingFeedback, optional
        Checked for cancellation.

    Returns
    -------
    pandas.DataFrame or geopandas.GeoDataFrame
        One row per feature, columns in the order of the GIS's fields, the CRS
        from the source's authority code or WKT.
    """
    fields = source.fields()
    keep = [i for i in range(fields.count()) if fields.at(i).name() not in set(skip_fields)]
    request = QgsFeatureRequest()
    # A layer without geometry is a table whatever the input accepts, as thrustmap's readers have it.
    table = geometry == "table" or source.wkbType() == QgsWkbTypes.NoGeometry
    if table:
        request.setFlags(QgsFeatureRequest.NoGeometry)
    crs = source.sourceCrs()
    if to_crs is not None and to_crs.isValid() and not table:
        if crs.isValid() and crs != to_crs:
            request.setDestinationCrs(to_crs, transform_context)
        crs = to_crs
    drop_m = QgsWkbTypes.hasM(source.wkbType())
    rows, wkbs = [], []
    for feature in source.getFeatures(request):
        if feedback is not None and feedback.isCanceled():
            break
        attributes = feature.attributes()
        rows.append([attributes[i] for i in keep])
        if not table:
            wkbs.append(_geometry_wkb(feature, drop_m))
    columns = list(zip(*rows, strict=True)) if rows else [() for _ in keep]
    frame = pd.DataFrame(
        {
            fields.at(i).name(): _column(col, fields.at(i).type())
            for i, col in zip(keep, columns, strict=True)
        },
        index=pd.RangeIndex(len(rows)),
    )
    if table:
        return frame
    return geopandas.GeoDataFrame(
        frame,
        geometry=shapely.from_wkb(np.array(wkbs, dtype=object)),
        crs=to_pyproj_crs(crs),
    )


def _field_and_values(series):
    """The GIS field type of a column and its values as plain Python values (None for missing)."""
    missing = series.isna().to_numpy()
    dtype = series.dtype
    if isinstance(dtype, geopandas.array.GeometryDtype):
        return QVariant.String, _with_none(
            shapely.to_wkt(np.asarray(series, dtype=object)), missing
        )
    if pd.api.types.is_bool_dtype(dtype):
        return QVariant.Bool, _with_none(series.to_numpy(dtype=object), missing)
    if pd.api.types.is_integer_dtype(dtype):
        return QVariant.LongLong, _with_none(series.to_numpy(dtype=object), missing)
    if pd.api.types.is_float_dtype(dtype):
        return QVariant.Double, _with_none(series.to_numpy(dtype="float64").astype(object), missing)
    if pd.api.types.is_datetime64_any_dtype(dtype):
        stamps = series.astype(object).to_numpy()
        return QVariant.DateTime, [
            None if m else QDateTime(v) for v, m in zip(stamps, missing, strict=True)
        ]
    kind = pd.api.types.infer_dtype(series, skipna=True)
    values = series.to_numpy(dtype=object)
    if kind == "integer":
        return QVariant.LongLong, _with_none(values, missing)
    if kind in ("floating", "mixed-integer-float", "decimal"):
        return QVariant.Double, _with_none(values.astype(float).astype(object), missing)
    if kind == "boolean":
        return QVariant.Bool, _with_none(values, missing)
    if kind == "date":
        return QVariant.Date, [
            None if m else QDate(v) for v, m in zip(values, missing, strict=True)
        ]
    strings = np.array([v if isinstance(v, str) else str(v) for v in values], dtype=object)
    return QVariant.String, _with_none(strings, missing)


def _with_none(values, missing):
    out = np.asarray(values, dtype=object).copy()
    out[missing] = None
    return out.tolist()


def _sink_wkb_type(geometries, declared):
    """The sink geometry type fitting every geometry (multi when any is multi)."""
    present = geometries[~shapely.is_missing(geometries)]
    if present.size == 0:
        return DECLARED_WKB[declared]
    ids = set(np.unique(shapely.get_type_id(present)).tolist())
    families = {_SHAPELY_WKB[i][0] for i in ids if i in _SHAPELY_WKB}
    if len(families) != 1 or not ids <= set(_SHAPELY_WKB):
        wkb_type = QgsWkbTypes.Unknown
    else:
        singles = {_SHAPELY_WKB[i][1] for i in ids}
        wkb_type = singles.pop() if len(singles) == 1 else _SHAPELY_WKB[min(ids)][2]
    if shapely.has_z(present).any():
        wkb_type = QgsWkbTypes.addZ(wkb_type)
    return wkb_type


def frame_to_features(frame, *, geometry):
    """Turn a tool's output (Geo)DataFrame into GIS fields, features, geometry type and CRS.

    Parameters
    ----------
    frame : pandas.DataFrame or geopandas.GeoDataFrame
        The tool's output.
    geometry : str
        Declared geometry of the output; used for an empty layer, and
        ``"table"`` writes no geometry.

    Returns
    -------
    fields : QgsFields
    features : list of QgsFeature
    wkb_type : QgsWkbTypes.Type
        The one type fitting every geometry: multi when any part is multi
        (single parts are then written as one-part multis), Z when any has Z.
    crs : QgsCoordinateReferenceSystem
        Invalid when the frame has no CRS.
    """
    spatial = isinstance(frame, geopandas.GeoDataFrame) and geometry != "table"
    attributes = frame.drop(columns=frame.geometry.name) if spatial else frame
    if spatial:
        geoms = np.asarray(frame.geometry.array, dtype=object)
        wkb_type = _sink_wkb_type(geoms, geometry)
        wkbs = shapely.to_wkb(geoms, flavor="iso")
        crs = to_qgis_crs(frame.crs)
    else:
        wkbs = [None] * len(frame)
        wkb_type = QgsWkbTypes.NoGeometry
        crs = QgsCoordinateReferenceSystem()
    fields = QgsFields()
    columns = []
    for name in attributes.columns:
        qtype, values = _field_and_values(attributes[name])
        fields.append(QgsField(str(name), qtype))
        columns.append(values)
    rows = list(zip(*columns, strict=True)) if columns else [() for _ in range(len(frame))]
    multi = QgsWkbTypes.isMultiType(wkb_type)
    features = []
    for row, wkb in zip(rows, wkbs, strict=True):
        feature = QgsFeature(fields)
        feature.setAttributes(list(row))
        if wkb is not None:
            geometry_out = QgsGeometry()
            geometry_out.fromWkb(wkb)
            if multi:
                # Every destination (memory, GeoPackage, Shapefile) gets the layer's own type.
                geometry_out.convertToMultiType()
            feature.setGeometry(geometry_out)
        features.append(feature)
    return fields, features, wkb_type, crs
