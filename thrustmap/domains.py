"""Structural domains: which attitudes belong together, and their statistics.

Attitudes (the attitude table of :func:`thrustmap.read_attitudes`) are grouped
into domains by a polygon layer (a spatial join; thrust sheets work the same
way with their id column) or by an attribute column. Every attitude ends in
exactly one domain or in ``unassigned``. Per domain, :func:`domain_statistics`
gives the mean orientation of every feature type and fits a fold to the
bedding, returning the ``domains`` (polygons) and ``fold_axes`` (points) layers.
"""

from __future__ import annotations

import logging
import warnings
from dataclasses import dataclass, field

import geopandas as gpd
import numpy as np
import pandas as pd
import shapely

from thrustmap.errors import CRSError, DegenerateDataError, InputError, ThrustmapWarning
from thrustmap.folds import FoldFit, fit_fold
from thrustmap.north import true_to_grid
from thrustmap.orientation import (
    dip_direction_to_strike,
    plane_to_pole,
    pole_to_plane,
)
from thrustmap.stats import fisher_stats, orientation_tensor

__all__ = [
    "DOMAIN_COLUMN",
    "UNASSIGNED",
    "DomainStatistics",
    "domains_from_polygons",
    "domains_from_attribute",
    "domain_statistics",
]

log = logging.getLogger(__name__)

DOMAIN_COLUMN = "domain"
UNASSIGNED = "unassigned"
_OVERLAP_TOLERANCE = 1e-9
_REQUIRED = ("feature", "kind", "dip_direction", "dip", "trend", "plunge")


def _with_domain(attitudes: gpd.GeoDataFrame, values: np.ndarray) -> gpd.GeoDataFrame:
    out = attitudes.copy()
    if DOMAIN_COLUMN in out.columns:
        out = out.rename(columns={DOMAIN_COLUMN: f"orig_{DOMAIN_COLUMN}"})
    out[DOMAIN_COLUMN] = pd.Series(values, index=out.index, dtype=object)
    return out


def _ids(polygons: gpd.GeoDataFrame, id_column: str, layer: str) -> np.ndarray:
    if id_column not in polygons.columns:
        raise InputError(
            f"no id column {id_column!r}; columns are: {', '.join(map(str, polygons.columns))}",
            layer=layer,
            field=id_column,
        )
    raw = polygons[id_column].to_numpy(dtype=object)
    ids = np.array(["" if pd.isna(v) else str(v).strip() for v in raw], dtype=object)
    empty = np.flatnonzero(ids == "")
    if empty.size:
        raise InputError(
            "a domain polygon has no id; give every polygon a name",
            layer=layer,
            row=int(empty[0]) + 1,
            field=id_column,
            value=raw[empty[0]],
        )
    if np.any(ids == UNASSIGNED):
        raise InputError(
            f"{UNASSIGNED!r} is reserved for attitudes outside every domain; rename that polygon",
            layer=layer,
            row=int(np.flatnonzero(ids == UNASSIGNED)[0]) + 1,
            field=id_column,
            value=UNASSIGNED,
        )
    return ids


def _polygon_geometries(polygons: gpd.GeoDataFrame, layer: str) -> np.ndarray:
    geoms = polygons.geometry.to_numpy()
    bad = np.flatnonzero(~np.isin(shapely.get_type_id(geoms), [3, 6]))
    if bad.size:
        g = geoms[bad[0]]
        raise InputError(
            f"domains must be polygons; found {'no geometry' if g is None else g.geom_type}",
            layer=layer,
            row=int(bad[0]) + 1,
            field="geometry",
        )
    invalid = np.flatnonzero(~shapely.is_valid(geoms))
    if invalid.size:
        warnings.warn(
            f"layer {layer}: {invalid.size} invalid polygon(s) repaired (first: row "
            f"{int(invalid[0]) + 1}, {shapely.is_valid_reason(geoms[invalid[0]])})",
            ThrustmapWarning,
            stacklevel=4,
        )
        geoms = geoms.copy()
        geoms[invalid] = shapely.make_valid(geoms[invalid])
    return geoms


def _check_overlaps(geoms: np.ndarray, ids: np.ndarray, layer: str) -> None:
    tree = shapely.STRtree(geoms)
    a, b = tree.query(geoms, predicate="intersects")
    keep = (a < b) & (ids[a] != ids[b])
    a, b = a[keep], b[keep]
    if not a.size:
        return
    shared = shapely.area(shapely.intersection(geoms[a], geoms[b]))
    smaller = np.minimum(shapely.area(geoms[a]), shapely.area(geoms[b]))
    hit = np.flatnonzero(shared > _OVERLAP_TOLERANCE * smaller)
    if hit.size:
        i, j = int(a[hit[0]]), int(b[hit[0]])
        raise InputError(
            f"domain polygons overlap: {ids[i]!r} (row {i + 1}) and {ids[j]!r} (row {j + 1}) "
            f"share {shared[hit[0]]:.6g} square units; edit the layer so that every point "
            f"lies in one domain ({hit.size} overlapping pair(s) in all)",
            layer=layer,
        )


def _same_crs(
    attitudes: gpd.GeoDataFrame, polygons: gpd.GeoDataFrame, layer: str
) -> gpd.GeoDataFrame:
    if attitudes.crs is None and polygons.crs is None:
        return polygons
    if attitudes.crs is None or polygons.crs is None:
        missing = "the attitudes" if attitudes.crs is None else f"layer {layer}"
        raise CRSError(
            f"{missing} carry no CRS; set it (e.g. with set_crs) so the layers can be overlaid"
        )
    if attitudes.crs != polygons.crs:
        log.info(
            "reprojecting %s from %s to the attitudes' CRS %s", layer, polygons.crs, attitudes.crs
        )
        return polygons.to_crs(attitudes.crs)
    return polygons


def domains_from_polygons(
    attitudes: gpd.GeoDataFrame,
    polygons: gpd.GeoDataFrame,
    *,
    id_column: str = DOMAIN_COLUMN,
    layer: str = "domains",
) -> gpd.GeoDataFrame:
    """Assign attitudes to the domain polygon they lie in (a spatial join).

    Works for any polygon layer with an id column: structural domains, thrust
    sheets (``id_column`` naming the sheet id), map units. Several polygons may
    share an id (a domain in parts). A point on the boundary shared by two
    domains goes to the first of them in layer order.

    Parameters
    ----------
    attitudes : geopandas.GeoDataFrame
        Point attitudes.
    polygons : geopandas.GeoDataFrame
        (Multi)Polygon layer, reprojected to the attitudes' CRS if needed.
    id_column : str
        Column of ``polygons`` naming each domain. Keyword only.
    layer : str
        Name of the polygon layer, used in messages.

    Returns
    -------
    geopandas.GeoDataFrame
        A copy of ``attitudes`` with a ``domain`` column (str): the domain id
        or ``"unassigned"`` outside every polygon. An existing ``domain``
        column is kept as ``orig_domain``.

    Raises
    ------
    InputError
        Missing id column, empty or reserved ids, non-polygon geometry, or two
        polygons of different domains that overlap (naming both).
    CRSError
        One layer has a CRS and the other none.

    Warns
    -----
    ThrustmapWarning
        Invalid polygons, which are repaired.

    Examples
    --------
    >>> from shapely import box
    >>> att = gpd.GeoDataFrame(geometry=gpd.points_from_xy([1, 5, 20], [1, 1, 1]))
    >>> dom = gpd.GeoDataFrame({"domain": ["D1", "D2"]}, geometry=[box(0, 0, 4, 4), box(4, 0, 8, 4)])
    >>> domains_from_polygons(att, dom)["domain"].tolist()
    ['D1', 'D2', 'unassigned']
    """
    ids, geoms = _prepare(attitudes, polygons, id_column, layer)
    return _with_domain(attitudes, _assign(attitudes, ids, geoms, layer))


def _prepare(
    attitudes: gpd.GeoDataFrame, polygons: gpd.GeoDataFrame, id_column: str, layer: str
) -> tuple[np.ndarray, np.ndarray]:
    """Checked ids and (repaired) geometries of a domain layer in the attitudes' CRS."""
    polygons = _same_crs(attitudes, polygons, layer)
    ids = _ids(polygons, id_column, layer)
    geoms = _polygon_geometries(polygons, layer)
    _check_overlaps(geoms, ids, layer)
    return ids, geoms


def _assign(
    attitudes: gpd.GeoDataFrame, ids: np.ndarray, geoms: np.ndarray, layer: str
) -> np.ndarray:
    assigned = np.full(len(attitudes), UNASSIGNED, dtype=object)
    if len(geoms) and len(attitudes):
        point_idx, poly_idx = shapely.STRtree(geoms).query(
            attitudes.geometry.to_numpy(), predicate="intersects"
        )
        order = np.lexsort((poly_idx, point_idx))
        point_idx, poly_idx = point_idx[order], poly_idx[order]
        first = np.unique(point_idx, return_index=True)[1]
        assigned[point_idx[first]] = ids[poly_idx[first]]
    n_out = int(np.sum(assigned == UNASSIGNED))
    if n_out:
        log.info("%d of %d attitudes lie outside every polygon of %s", n_out, len(attitudes), layer)
    return assigned


def domains_from_attribute(attitudes: gpd.GeoDataFrame, column: str) -> gpd.GeoDataFrame:
    """Assign attitudes to domains named by one of their columns.

    Parameters
    ----------
    attitudes : geopandas.GeoDataFrame or pandas.DataFrame
    column : str
        Column holding the domain name; empty or missing values become
        ``"unassigned"``.

    Returns
    -------
    geopandas.GeoDataFrame
        A copy with a ``domain`` column (str); another column called
        ``domain`` is kept as ``orig_domain``.

    Raises
    ------
    InputError
        When the column does not exist.

    Examples
    --------
    >>> import pandas as pd
    >>> domains_from_attribute(pd.DataFrame({"zone": ["A", None, 3]}), "zone")["domain"].tolist()
    ['A', 'unassigned', '3']
    """
    if column not in attitudes.columns:
        raise InputError(
            f"no column {column!r} to take domains from; columns are: "
            f"{', '.join(map(str, attitudes.columns))}",
            field=column,
        )
    raw = attitudes[column].to_numpy(dtype=object)
    names = np.array(
        [UNASSIGNED if pd.isna(v) or str(v).strip() == "" else str(v).strip() for v in raw],
        dtype=object,
    )
    if column == DOMAIN_COLUMN:
        out = attitudes.copy()
        out[DOMAIN_COLUMN] = pd.Series(names, index=out.index, dtype=object)
        return out
    return _with_domain(attitudes, names)


@dataclass
class DomainStatistics:
    """Result of :func:`domain_statistics`.

    Attributes
    ----------
    domains : geopandas.GeoDataFrame
        One row per domain: its polygon and statistics (see
        :func:`domain_statistics`).
    fold_axes : geopandas.GeoDataFrame
        One point per domain with a fitted fold: axis and axial plane.
    attitudes : geopandas.GeoDataFrame
        The input attitudes with their ``domain``.
    fits : dict of str to FoldFit
        The fold fits by domain.
    unassigned : int
        Attitudes outside every domain polygon (not in ``domains``).
    """

    domains: gpd.GeoDataFrame
    fold_axes: gpd.GeoDataFrame
    attitudes: gpd.GeoDataFrame
    fits: dict[str, FoldFit] = field(default_factory=dict)
    unassigned: int = 0


_FOLD_COLUMNS = (
    "axis_trend",
    "axis_plunge",
    "cone95",
    "cylindricity",
    "interlimb_angle",
    "tightness",
    "plunge_class",
    "axial_surface_class",
    "axial_plane_dip_direction",
    "axial_plane_dip",
    "axial_plane_strike",
    "hinge_n",
    "hinge_angle",
)


def _feature_stats(rows: pd.DataFrame, feature: str, kind: str) -> dict[str, object]:
    out: dict[str, object] = {f"{feature}_n": len(rows)}
    if kind == "plane":
        az, dip = plane_to_pole(rows["dip_direction"].to_numpy(float), rows["dip"].to_numpy(float))
    else:
        az, dip = rows["trend"].to_numpy(float), rows["plunge"].to_numpy(float)
    names = ("mean_dip_direction", "mean_dip") if kind == "plane" else ("mean_trend", "mean_plunge")
    if len(rows) < 2:
        return out
    s = fisher_stats(az, dip)
    mean = (
        pole_to_plane(s.mean_trend, s.mean_plunge)
        if kind == "plane"
        else (s.mean_trend, s.mean_plunge)
    )
    shape = orientation_tensor(az, dip).shape
    out.update(
        {
            f"{feature}_{names[0]}": float(mean[0]),
            f"{feature}_{names[1]}": float(mean[1]),
            f"{feature}_k": s.k,
            f"{feature}_alpha95": s.alpha,
            f"{feature}_woodcock_k": shape.K,
            f"{feature}_woodcock_c": shape.C,
        }
    )
    return out


def _flags(column: pd.Series) -> np.ndarray:
    return np.array([False if pd.isna(v) else bool(v) for v in column.to_numpy(dtype=object)])


def _complete(rows: pd.DataFrame) -> tuple[pd.DataFrame, int]:
    """Rows whose orientation columns for their kind are all finite, and how many were not."""
    planes = rows["kind"] == "plane"
    ok_plane = np.isfinite(rows["dip_direction"].to_numpy(float)) & np.isfinite(
        rows["dip"].to_numpy(float)
    )
    ok_line = np.isfinite(rows["trend"].to_numpy(float)) & np.isfinite(
        rows["plunge"].to_numpy(float)
    )
    ok = np.where(planes.to_numpy(bool), ok_plane, ok_line)
    return rows[ok], int((~ok).sum())


def _one_domain(
    rows: pd.DataFrame, fold_feature: str, n_boot: int, seed: int
) -> tuple[dict[str, object], FoldFit | None]:
    record: dict[str, object] = {"n_attitudes": len(rows)}
    notes: list[str] = []
    fit = None
    rows, incomplete = _complete(rows)
    if incomplete:
        notes.append(f"{incomplete} attitude(s) without a complete orientation left out")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", ThrustmapWarning)
        for (feature, kind), group in rows.groupby(["feature", "kind"], sort=True):
            if kind in ("plane", "line"):
                record.update(_feature_stats(group, str(feature), str(kind)))
        beds = rows[(rows["feature"] == fold_feature) & (rows["kind"] == "plane")]
        hinges = rows[(rows["feature"] == "hinge_line") & (rows["kind"] == "line")]
        record["fold_n"] = len(beds)
        if len(beds) == 0:
            record["fold_status"] = f"no {fold_feature}"
        else:
            over = _flags(beds["overturned"]) if "overturned" in beds.columns else None
            try:
                fit = fit_fold(
                    beds["dip_direction"].to_numpy(float),
                    beds["dip"].to_numpy(float),
                    overturned=over,
                    seed=seed,
                    n_boot=n_boot,
                    hinge_trend=hinges["trend"].to_numpy(float) if len(hinges) else None,
                    hinge_plunge=hinges["plunge"].to_numpy(float) if len(hinges) else None,
                )
            except DegenerateDataError as exc:
                record["fold_status"] = "degenerate"
                notes.append(str(exc))
            else:
                record["fold_status"] = "ok"
                d = fit.to_dict()
                record.update({k: d[k] for k in _FOLD_COLUMNS})
    for w in caught:
        if issubclass(w.category, ThrustmapWarning) and str(w.message) not in notes:
            notes.append(str(w.message))
    record["notes"] = "; ".join(notes)
    return record, fit


def domain_statistics(
    attitudes: gpd.GeoDataFrame,
    polygons: gpd.GeoDataFrame | None = None,
    *,
    id_column: str = DOMAIN_COLUMN,
    fold_feature: str = "bedding",
    n_boot: int = 1000,
    seed: int = 0,
) -> DomainStatistics:
    """Statistics of every domain: mean orientation per feature type and the fold in the bedding.

    Parameters
    ----------
    attitudes : geopandas.GeoDataFrame
        The attitude table (columns ``feature``, ``kind``, ``dip_direction``,
        ``dip``, ``trend``, ``plunge``; ``overturned`` and ``convergence`` used
        when present).
    polygons : geopandas.GeoDataFrame, optional
        Domain polygons (or thrust sheets) with the id in ``id_column``.
        Without it the attitudes are grouped by their ``id_column`` column, or
        form the single domain ``"all"`` when they have no such column.
    id_column : str
        Domain id column. Keyword only.
    fold_feature : str
        Feature whose planes are folded (``bedding``).
    n_boot, seed : int
        Bootstrap of the fold axis cone, see :func:`thrustmap.folds.fit_fold`.

    Returns
    -------
    DomainStatistics
        ``domains`` layer columns: ``domain``, ``n_attitudes``; per feature
        type ``<feature>_n`` and, from 2 measurements on, the Fisher mean
        (``<feature>_mean_dip_direction``/``_mean_dip`` for planes, from the
        mean pole; ``_mean_trend``/``_mean_plunge`` for lines), ``_k``,
        ``_alpha95`` and Woodcock ``_woodcock_k``/``_woodcock_c``; the fold:
        ``fold_n``, ``fold_status`` (``ok``, ``degenerate``, ``no <feature>``),
        ``axis_trend``, ``axis_plunge``, ``cone95``, ``cylindricity``,
        ``interlimb_angle``, ``tightness``, ``plunge_class``,
        ``axial_surface_class``, ``axial_plane_dip_direction``,
        ``axial_plane_dip``, ``axial_plane_strike``, ``hinge_n``,
        ``hinge_angle``; ``notes`` (warnings raised for the domain, e.g. a
        bimodal bedding whose Fisher mean is not meaningful). Geometry: the
        domain's polygons dissolved, or the convex hull of its attitudes when
        grouped by attribute (null below 3 non-collinear points).
        ``fold_axes`` layer: a point inside each domain with a fitted fold
        (the polygon's representative point, or the centroid of its bedding
        stations) with ``domain``, ``n``, the fold columns above and, when
        the attitudes carry ``convergence``, grid-north copies
        ``axis_trend_grid``, ``axial_plane_dip_direction_grid`` and
        ``axial_plane_strike_grid``; ``azimuth_ref`` = ``"true"``.
        Azimuths are in the reference of the input (true north for the
        attitude table).

    Raises
    ------
    InputError
        Missing attitude columns; see also :func:`domains_from_polygons`.

    Examples
    --------
    >>> from shapely import box
    >>> att = gpd.GeoDataFrame(
    ...     {"feature": "bedding", "kind": "plane", "dip_direction": [90, 270] * 4,
    ...      "dip": [30, 30, 40, 40, 35, 35, 25, 25], "trend": float("nan"),
    ...      "plunge": float("nan")},
    ...     geometry=gpd.points_from_xy(range(8), [1] * 8), crs=32633)
    >>> dom = gpd.GeoDataFrame({"domain": ["D1"]}, geometry=[box(-1, 0, 9, 2)], crs=32633)
    >>> res = domain_statistics(att, dom, n_boot=0)
    >>> res.fold_axes[["domain", "tightness"]].values.tolist()
    [['D1', 'open']]
    """
    missing = [c for c in _REQUIRED if c not in attitudes.columns]
    if missing:
        raise InputError(
            f"the attitudes lack column(s) {', '.join(missing)}; expected the attitude table "
            "of thrustmap.read_attitudes"
        )
    ids = geoms = None
    if polygons is not None:
        ids, geoms = _prepare(attitudes, polygons, id_column, "domains")
        assigned = _with_domain(attitudes, _assign(attitudes, ids, geoms, "domains"))
        order = list(dict.fromkeys(ids))
    elif id_column in attitudes.columns:
        assigned = domains_from_attribute(attitudes, id_column)
        order = sorted(set(assigned[DOMAIN_COLUMN]) - {UNASSIGNED})
        if UNASSIGNED in set(assigned[DOMAIN_COLUMN]):
            order.append(UNASSIGNED)
    else:
        assigned = _with_domain(attitudes, np.full(len(attitudes), "all", dtype=object))
        order = ["all"]
    records, fits, shapes, points = [], {}, [], []
    by_domain = dict(tuple(assigned.groupby(DOMAIN_COLUMN, sort=False)))
    for name in order:
        rows = by_domain.get(name, assigned.iloc[0:0])
        record, fit = _one_domain(rows, fold_feature, n_boot, seed)
        if record["notes"]:
            log.warning("domain %s: %s", name, record["notes"])
        records.append({DOMAIN_COLUMN: name, **record})
        geom = _domain_geometry(rows, None if ids is None else geoms[ids == name])
        shapes.append(geom)
        if fit is not None:
            fits[name] = fit
            beds = rows[rows["feature"] == fold_feature]
            points.append((name, fit, _anchor(geom, beds), _mean_convergence(beds)))
    table = pd.DataFrame.from_records(records)
    crs = attitudes.crs
    domains = gpd.GeoDataFrame(table, geometry=shapes, crs=crs)
    unassigned = int(np.sum(assigned[DOMAIN_COLUMN].to_numpy(dtype=object) == UNASSIGNED))
    if polygons is None:
        unassigned = 0
    return DomainStatistics(domains, _fold_axes(points, crs), assigned, fits, unassigned)


def _domain_geometry(rows: pd.DataFrame, parts: np.ndarray | None):
    if parts is not None:
        return shapely.union_all(parts)
    hull = shapely.convex_hull(shapely.multipoints(rows.geometry.to_numpy())) if len(rows) else None
    return hull if hull is not None and hull.geom_type == "Polygon" else None


def _anchor(geom, beds):
    if geom is not None and not geom.is_empty:
        return geom.representative_point()
    return shapely.centroid(shapely.multipoints(beds.geometry.to_numpy()))


def _mean_convergence(beds) -> float | None:
    if "convergence" not in beds.columns:
        return None
    values = beds["convergence"].to_numpy(float)
    return float(np.nanmean(values)) if np.isfinite(values).any() else None


def _fold_axes(points, crs) -> gpd.GeoDataFrame:
    rows = []
    for name, fit, _point, convergence in points:
        d = fit.to_dict()
        row = {DOMAIN_COLUMN: name, "n": fit.n, **{k: d[k] for k in _FOLD_COLUMNS}}
        row["azimuth_ref"] = "true"
        if convergence is not None:
            row["axis_trend_grid"] = float(true_to_grid(fit.axis_trend, convergence))
            ap_grid = float(true_to_grid(fit.axial_plane_dip_direction, convergence))
            row["axial_plane_dip_direction_grid"] = ap_grid
            row["axial_plane_strike_grid"] = float(dip_direction_to_strike(ap_grid))
        rows.append(row)
    columns = [DOMAIN_COLUMN, "n", *_FOLD_COLUMNS, "azimuth_ref"]
    table = pd.DataFrame.from_records(rows, columns=None if rows else columns)
    return gpd.GeoDataFrame(table, geometry=[p[2] for p in points], crs=crs)
