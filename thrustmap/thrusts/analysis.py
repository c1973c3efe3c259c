"""``analyze_thrusts``: the whole thrust-network analysis from the contract layers."""

from __future__ import annotations

import logging
from dataclasses import dataclass
from typing import Any

import geopandas as gpd
import numpy as np
import pandas as pd
import pyproj
import shapely

from thrustmap.errors import DegenerateDataError, ParameterError
from thrustmap.north import convergence as grid_convergence
from thrustmap.north import grid_to_true, true_to_grid
from thrustmap.thrusts._geometry import unit_vectors
from thrustmap.thrusts.hanging_wall import (
    given_sides,
    hw_dip_directions,
    sides_from_attitudes,
    sides_from_vergence,
)
from thrustmap.thrusts.order import (
    constraint_relations,
    cross_cutting_relations,
    formation_order,
    in_sequence_candidates,
)
from thrustmap.thrusts.sheets import build_sheets
from thrustmap.thrusts.spacing import (
    cast_scanlines,
    scanline_intersections,
    spacing_statistics,
    successive_pairs,
)
from thrustmap.thrusts.topology import build_topology
from thrustmap.thrusts.transport import (
    TransportDirection,
    given_transport,
    transport_from_slickenlines,
    transport_from_traces,
)
from thrustmap.thrusts.validate import (
    TRACE_REASONS,
    prepare_area,
    prepare_attitudes,
    prepare_constraints,
    prepare_traces,
    rejects_frame,
)

__all__ = ["LAYER_NAMES", "ThrustAnalysis", "analyze_thrusts"]

log = logging.getLogger(__name__)

LAYER_NAMES = (
    "thrust_traces",
    "thrust_sheets",
    "thrust_nodes",
    "spacing_scanlines",
    "spacing",
    "thrust_relations",
    "thrust_rejected",
)


@dataclass(frozen=True)
class ThrustAnalysis:
    """Everything :func:`analyze_thrusts` found, in the working (metric) CRS.

    Attributes
    ----------
    traces : GeoDataFrame
        Accepted traces (snapped geometry) with ``thrust_id``, ``name``,
        ``hw_side`` (``left``/``right`` of the digitising direction),
        ``hw_side_source`` (``given``/``inferred``), ``hw_side_basis``
        (``hw_side``, ``hw_dip_direction``, ``attitudes`` or ``vergence``),
        ``hw_dip_direction`` (true north; the given value where one was given)
        and ``hw_dip_direction_grid``, ``dip``, ``rank`` (1 = oldest),
        ``sequence`` (``in``/``out``), ``sequence_detail``, ``contradiction``
        (id of a cycle the thrust is in, else ""), ``position_m`` (centroid
        along transport, metres from the hinterland edge of the study area),
        ``length_m``, ``source_row`` and the other input columns.
    sheets : GeoDataFrame
        ``sheet_id`` (S1 = most hinterland), ``floor_thrust``, ``roof_thrust``,
        ``floor_thrusts``, ``roof_thrusts`` (comma-separated, longest contact
        first), ``area_m2``, ``mean_width_m`` (along transport),
        ``position_m`` (as for traces).
    nodes : GeoDataFrame
        Points: ``node_id``, ``kind`` (free_tip, branch, truncation,
        boundary, crossing), ``thrust_id``, ``end``, ``part``,
        ``other_thrust``, ``angle`` (degrees), ``gap_m`` (snap distance),
        ``younger`` (the thrust the node shows to be younger, "" if none).
    scanlines : GeoDataFrame
        Segments between successive thrusts on each scanline: ``scanline``,
        ``hinterland_thrust``, ``foreland_thrust``, ``pair``, ``length_m``.
    spacing : DataFrame
        Statistics per pair, over every pair (``pair`` = "all", see
        :func:`thrustmap.thrusts.spacing.spacing_statistics`) and over the
        pairs of two in-sequence thrusts (``pair`` = "in_sequence": the
        spacing of the imbricate stack, leaving out the scanline segments
        that meet an out-of-sequence thrust).
    relations : DataFrame
        Every "formed after" relation: ``relation_id``, ``younger``, ``older``,
        ``evidence`` (truncation, crossing, constraint, in_sequence),
        ``weight``, ``status`` (used, contradicted, overridden),
        ``contradiction``, ``detail``, ``x``, ``y``.
    contradictions : DataFrame
        One row per cycle: ``contradiction``, ``thrusts``, ``cycle``,
        ``relations``, ``message``.
    rejected : DataFrame
        Rejected trace and constraint rows with ``layer``, ``source_row``,
        ``thrust_id``, ``reason``, ``field``, ``value``, ``message``.
    transport : TransportDirection
        Azimuth (grid and true), source, confidence cone or spread.
    crs : pyproj.CRS
        The working CRS of every layer.
    """

    traces: gpd.GeoDataFrame
    sheets: gpd.GeoDataFrame
    nodes: gpd.GeoDataFrame
    scanlines: gpd.GeoDataFrame
    spacing: pd.DataFrame
    relations: pd.DataFrame
    contradictions: pd.DataFrame
    rejected: pd.DataFrame
    transport: TransportDirection
    crs: pyproj.CRS

    @property
    def order(self) -> list[str]:
        """Thrust ids from the oldest to the youngest."""
        return self.traces.sort_values("rank")["thrust_id"].tolist()

    def summary(self) -> str:
        """A few lines for people: transport, formation order, out-of-sequence thrusts, spacing.

        Examples
        --------
        >>> import geopandas as gpd
        >>> from shapely import LineString
        >>> traces = gpd.GeoDataFrame({"thrust_id": ["A", "B"], "hw_side": ["left", "left"]},
        ...     geometry=[LineString([(500000, 5e6), (500000, 5.005e6)]),
        ...               LineString([(501000, 5e6), (501000, 5.005e6)])], crs="EPSG:32633")
        >>> print(analyze_thrusts(traces, scanline_interval=500.0).summary().splitlines()[1])
        formation order (oldest first): A, B
        """
        tr = self.transport
        out = self.traces.loc[self.traces["sequence"] == "out", "thrust_id"].tolist()
        overall = self.spacing.set_index("pair")
        every, stack = overall.loc["all"], overall.loc["in_sequence"]
        lines = [
            f"transport toward {tr.azimuth_true:.1f} (true) / {tr.azimuth_grid:.1f} (grid) "
            f"from {tr.source.replace('_', ' ')}",
            "formation order (oldest first): " + ", ".join(self.order),
            "out of sequence: " + (", ".join(out) if out else "none"),
            f"spacing along transport: mean {every['mean_m']:.0f} m, median "
            f"{every['median_m']:.0f} m, CV {every['cv']:.2f} (n = {every['n']}); "
            f"between in-sequence thrusts: mean {stack['mean_m']:.0f} m (n = {stack['n']})",
        ]
        lines += [
            f"contradiction {c.contradiction}: {c.cycle}" for c in self.contradictions.itertuples()
        ]
        if len(self.rejected):
            lines.append(f"rejected rows: {len(self.rejected)} (see thrust_rejected)")
        return "\n".join(lines)

    def layers(self) -> dict[str, pd.DataFrame]:
        """The output layers and tables under their GeoPackage layer names (``LAYER_NAMES``)."""
        return {
            "thrust_traces": self.traces,
            "thrust_sheets": self.sheets,
            "thrust_nodes": self.nodes,
            "spacing_scanlines": self.scanlines,
            "spacing": self.spacing,
            "thrust_relations": self.relations,
            "thrust_rejected": self.rejected,
        }


@dataclass
class _Sides:
    """Accepted traces with their hanging-wall side, as rows get rejected along the way."""

    accepted: gpd.GeoDataFrame
    rejected: pd.DataFrame
    side: np.ndarray
    basis: np.ndarray

    @property
    def lines(self) -> np.ndarray:
        return np.asarray(self.accepted.geometry, dtype=object)

    def drop(self, mask: np.ndarray, codes: np.ndarray, fields: np.ndarray) -> None:
        """Move the masked traces to the rejects with their reason code and field."""
        if not mask.any():
            return
        acc = self.accepted
        rows = [
            {
                "layer": "thrust_traces",
                "source_row": int(acc["source_row"].iat[i]),
                "thrust_id": acc["thrust_id"].iat[i],
                "reason": codes[i],
                "field": fields[i],
                "value": None if pd.isna(acc[fields[i]].iat[i]) else str(acc[fields[i]].iat[i]),
                "message": TRACE_REASONS[codes[i]],
            }
            for i in np.flatnonzero(mask)
        ]
        self.rejected = pd.concat([self.rejected, rejects_frame(rows)], ignore_index=True)
        self.accepted = acc[~mask].reset_index(drop=True)
        self.side, self.basis = self.side[~mask], self.basis[~mask]


def _hanging_walls(
    accepted: gpd.GeoDataFrame,
    rejected: pd.DataFrame,
    att: gpd.GeoDataFrame | None,
    *,
    crs: pyproj.CRS,
    conv0: float,
    transport_azimuth: float | None,
    azimuth_ref: str,
    declination: float | None,
    attitude_radius: float,
) -> tuple[_Sides, TransportDirection]:
    """Sides given, then from attitudes; the transport direction; then sides from vergence."""
    lines = np.asarray(accepted.geometry, dtype=object)
    mid = shapely.get_coordinates(shapely.centroid(lines))
    az = true_to_grid(
        accepted["hw_dip_direction"].to_numpy(dtype=float),
        grid_convergence(mid[:, 0], mid[:, 1], crs),
    )
    side, basis, problem = given_sides(lines, accepted["hw_side"], az)
    state = _Sides(accepted, rejected, side, basis)
    fields = np.where(problem == "hw_side_conflict", "hw_side", "hw_dip_direction")
    state.drop(problem != "", problem, fields)

    unknown = np.flatnonzero(state.side == 0)
    if att is not None and len(unknown):
        s_att, _ = sides_from_attitudes(state.lines[unknown], att, crs=crs, radius=attitude_radius)
        state.side[unknown] = s_att
        state.basis[unknown[s_att != 0]] = "attitudes"

    transport = None
    if transport_azimuth is not None:
        transport = given_transport(
            transport_azimuth, azimuth_ref=azimuth_ref, convergence=conv0, declination=declination
        )
    elif att is not None:
        transport = transport_from_slickenlines(att, crs=crs, convergence=conv0)
    if transport is None:
        transport = transport_from_traces(state.lines, state.side, convergence=conv0)
    if transport is None:
        raise DegenerateDataError(
            "no hanging-wall side is given or can be inferred for any trace: give hw_side or "
            "hw_dip_direction for at least one trace, a transport_azimuth, or attitudes with "
            "fault/thrust planes near the traces or reverse-sense slickenlines"
        )
    unknown = np.flatnonzero(state.side == 0)
    if len(unknown):
        s_verg = sides_from_vergence(state.lines[unknown], transport.azimuth_grid)
        state.side[unknown] = s_verg
        state.basis[unknown[s_verg != 0]] = "vergence"
    n = len(state.side)
    state.drop(state.side == 0, np.full(n, "hw_side_unresolved"), np.full(n, "hw_side"))
    return state, transport


def analyze_thrusts(
    traces: gpd.GeoDataFrame,
    *,
    study_area: Any = None,
    transport_azimuth: float | None = None,
    age_constraints: pd.DataFrame | None = None,
    attitudes: gpd.GeoDataFrame | None = None,
    azimuth_ref: str = "true",
    declination: float | None = None,
    snap_tolerance: float = 10.0,
    scanline_interval: float | None = None,
    branch_angle: float = 15.0,
    attitude_radius: float = 1000.0,
    n_boot: int = 1000,
    seed: int = 0,
) -> ThrustAnalysis:
    """Analyse a thrust network: topology, transport, sheets, spacing and formation order.

    Parameters
    ----------
    traces : GeoDataFrame
        The ``thrust_traces`` layer: (Multi)LineStrings with ``thrust_id`` and
        optionally ``name``, ``hw_side`` (``left``/``right`` of the digitising
        direction), ``hw_dip_direction`` (true-north azimuth of the hanging-wall
        dip, degrees) and ``dip`` (degrees). A geographic CRS is reprojected to
        the local UTM zone; a missing CRS is an error.
    study_area : GeoDataFrame, GeoSeries or shapely geometry, optional
        Polygon(s) of the mapped area (a bare geometry is taken in the traces'
        CRS). Default: the bounding box of the traces.
    transport_azimuth : float, optional
        Transport direction (degrees, toward the foreland). Default: from
        slickenlines in ``attitudes``, else from the trace geometry.
    age_constraints : DataFrame, optional
        Rows ``younger``, ``older``, ``note``: thrust ``younger`` formed after
        thrust ``older``.
    attitudes : GeoDataFrame, optional
        The attitude table (thrustmap's contract): reverse-sense slickenlines
        give the transport direction; fault and thrust planes near a trace
        give a missing hanging-wall side.
    azimuth_ref : {"true", "grid", "magnetic"}
        North reference of ``transport_azimuth``.
    declination : float, optional
        Magnetic declination (degrees, east positive) for a magnetic
        ``transport_azimuth``.
    snap_tolerance : float
        Metres; trace ends this close to another trace or to the study-area
        boundary are snapped onto it.
    scanline_interval : float, optional
        Metres between spacing scanlines. Default: 1/100 of the study area's
        extent across the transport direction.
    branch_angle : float
        Degrees; an end meeting another thrust at no more than this angle with
        its hanging wall on the same side is a branch, otherwise a truncation.
    attitude_radius : float
        Metres; fault and thrust attitudes this close to a trace vote on its
        missing hanging-wall side.
    n_boot : int
        Bootstrap resamples for the spacing confidence intervals.
    seed : int
        Seed of the bootstrap.

    Returns
    -------
    ThrustAnalysis

    Raises
    ------
    CRSError
        When a layer has no CRS.
    InputError
        When a layer lacks a required column or the study area is unusable.
    ParameterError
        For a parameter out of range.
    DegenerateDataError
        When no trace survives validation or no hanging-wall side can be
        given or inferred for any trace.

    Examples
    --------
    >>> import geopandas as gpd
    >>> from shapely import LineString
    >>> x0, y0 = 700000.0, 5080000.0
    >>> traces = gpd.GeoDataFrame(
    ...     {"thrust_id": ["T1", "T2", "T3"], "hw_side": ["left"] * 3},
    ...     geometry=[LineString([(x0 + d, y0), (x0 + d, y0 + 5000)]) for d in (0, 1000, 2000)],
    ...     crs="EPSG:32633")
    >>> result = analyze_thrusts(traces, transport_azimuth=90.0, azimuth_ref="grid",
    ...     scanline_interval=500.0)
    >>> result.order, result.spacing["mean_m"].round(3).tolist()[-2:]
    (['T1', 'T2', 'T3'], [1000.0, 1000.0])
    """
    for name, value, low in (
        ("snap_tolerance", snap_tolerance, 0.0),
        ("attitude_radius", attitude_radius, 0.0),
    ):
        if not value >= low:
            raise ParameterError(f"{name} = {value} metres must be >= {low}")
    accepted, rejected, crs = prepare_traces(traces)
    if accepted.empty:
        raise DegenerateDataError(
            "no valid thrust trace: "
            + ", ".join(f"{k}: {v}" for k, v in rejected["reason"].value_counts().items())
        )
    att = prepare_attitudes(attitudes, crs=crs)
    area = prepare_area(study_area, crs=crs, input_crs=traces.crs, traces=accepted)
    centre = shapely.get_coordinates(shapely.centroid(area))[0]
    conv0 = float(grid_convergence(centre[0], centre[1], crs))

    state, transport = _hanging_walls(
        accepted,
        rejected,
        att,
        crs=crs,
        conv0=conv0,
        transport_azimuth=transport_azimuth,
        azimuth_ref=azimuth_ref,
        declination=declination,
        attitude_radius=attitude_radius,
    )
    accepted, rejected, side, basis = state.accepted, state.rejected, state.side, state.basis
    lines = state.lines
    az_given = accepted["hw_dip_direction"].to_numpy(dtype=float)
    ids = accepted["thrust_id"].to_numpy(dtype=object)
    index_of = {t: i for i, t in enumerate(ids)}
    log.info(
        "transport %.1f (grid) from %s; %d traces",
        transport.azimuth_grid,
        transport.source,
        len(ids),
    )

    rejected_ids = dict(zip(rejected["thrust_id"], rejected["reason"], strict=True))
    constraints, c_rejected = prepare_constraints(age_constraints, ids, rejected_ids)
    if len(c_rejected):
        rejected = pd.concat([rejected, c_rejected], ignore_index=True)

    topo = build_topology(
        lines, side, snap_tolerance=snap_tolerance, branch_angle=branch_angle, area=area
    )
    sheets = build_sheets(
        topo.pieces, topo.piece_trace, side, area, transport_grid=transport.azimuth_grid
    )
    segments, scan_no = cast_scanlines(area, transport.azimuth_grid, scanline_interval)
    inter = scanline_intersections(segments, topo.pieces, topo.piece_trace, transport.azimuth_grid)
    pairs = successive_pairs(inter)
    pairs["hinterland_thrust"] = ids[pairs["hinterland"].to_numpy(dtype=np.intp)]
    pairs["foreland_thrust"] = ids[pairs["foreland"].to_numpy(dtype=np.intp)]

    cut_rel, node_younger = cross_cutting_relations(topo.nodes, ids)
    strong = pd.concat([constraint_relations(constraints, index_of), cut_rel], ignore_index=True)
    t = unit_vectors(transport.azimuth_grid)
    snapped = _assemble(topo.pieces, topo.piece_trace)
    origin = float(np.min(shapely.get_coordinates(area) @ t))
    position = shapely.get_coordinates(shapely.centroid(snapped)) @ t - origin
    sheets["position_m"] = sheets["position_m"] - origin
    order = formation_order(
        ids, position, strong, in_sequence_candidates(pairs), intersections=inter
    )
    both_in = (order.sequence[pairs["hinterland"].to_numpy(dtype=np.intp)] == "in") & (
        order.sequence[pairs["foreland"].to_numpy(dtype=np.intp)] == "in"
    )
    spacing = spacing_statistics(pairs, seed=seed, n_boot=n_boot, subsets={"in_sequence": both_in})

    mid = shapely.get_coordinates(shapely.centroid(lines))
    conv = grid_convergence(mid[:, 0], mid[:, 1], crs)
    as_given = basis == "hw_dip_direction"
    hw_grid = np.where(as_given, true_to_grid(az_given, conv), hw_dip_directions(lines, side))
    hw_true = np.where(as_given, az_given, grid_to_true(hw_grid, conv))
    out_traces = _trace_frame(
        accepted, snapped, side, basis, hw_true, hw_grid, order, position, crs
    )
    return ThrustAnalysis(
        traces=out_traces,
        sheets=_sheet_frame(sheets, ids, crs),
        nodes=_node_frame(topo.nodes, node_younger, ids, crs),
        scanlines=_scanline_frame(pairs, scan_no, crs),
        spacing=spacing,
        relations=order.relations,
        contradictions=order.contradictions,
        rejected=rejected.reset_index(drop=True),
        transport=transport,
        crs=crs,
    )


def _assemble(pieces: np.ndarray, piece_trace: np.ndarray) -> np.ndarray:
    """One (Multi)LineString per trace from its snapped pieces."""
    multi = shapely.multilinestrings(pieces, indices=piece_trace)
    single = shapely.get_num_geometries(multi) == 1
    return np.where(single, shapely.get_geometry(multi, 0), multi)


def _trace_frame(
    accepted: gpd.GeoDataFrame,
    snapped: np.ndarray,
    side: np.ndarray,
    basis: np.ndarray,
    hw_true: np.ndarray,
    hw_grid: np.ndarray,
    order: Any,
    position: np.ndarray,
    crs: pyproj.CRS,
) -> gpd.GeoDataFrame:
    given = np.isin(basis, ["hw_side", "hw_dip_direction"])
    lead = pd.DataFrame(
        {
            "thrust_id": accepted["thrust_id"].to_numpy(dtype=object),
            "name": accepted["name"].to_numpy(dtype=object),
            "hw_side": np.where(side > 0, "left", "right").astype(object),
            "hw_side_source": np.where(given, "given", "inferred").astype(object),
            "hw_side_basis": basis.astype(str).astype(object),
            "hw_dip_direction": hw_true,
            "hw_dip_direction_grid": hw_grid,
            "dip": accepted["dip"].to_numpy(dtype=float),
            "rank": order.rank,
            "sequence": order.sequence,
            "sequence_detail": order.sequence_detail,
            "contradiction": order.contradiction,
            "position_m": position,
            "length_m": shapely.length(snapped),
            "source_row": accepted["source_row"].to_numpy(dtype=np.int64),
        }
    )
    rest = pd.DataFrame(
        accepted.drop(columns=[accepted.geometry.name, *lead.columns], errors="ignore")
    )
    frame = pd.concat([lead, rest.reset_index(drop=True)], axis=1)
    return gpd.GeoDataFrame(frame, geometry=snapped, crs=crs)


def _joined(values: list[list[int]], ids: np.ndarray) -> list[str]:
    return [",".join(ids[v]) if len(v) else "" for v in values]


def _sheet_frame(sheets: pd.DataFrame, ids: np.ndarray, crs: pyproj.CRS) -> gpd.GeoDataFrame:
    floor = sheets["floor"].to_numpy(dtype=np.intp)
    roof = sheets["roof"].to_numpy(dtype=np.intp)
    frame = pd.DataFrame(
        {
            "sheet_id": [f"S{i + 1}" for i in range(len(sheets))],
            "floor_thrust": np.where(floor >= 0, ids[np.maximum(floor, 0)] if len(ids) else "", ""),
            "roof_thrust": np.where(roof >= 0, ids[np.maximum(roof, 0)] if len(ids) else "", ""),
            "floor_thrusts": _joined(list(sheets["floors"]), ids),
            "roof_thrusts": _joined(list(sheets["roofs"]), ids),
            "area_m2": sheets["area_m2"].to_numpy(dtype=float),
            "mean_width_m": sheets["mean_width_m"].to_numpy(dtype=float),
            "position_m": sheets["position_m"].to_numpy(dtype=float),
        }
    )
    return gpd.GeoDataFrame(frame, geometry=list(sheets["geometry"]), crs=crs)


def _node_frame(
    nodes: pd.DataFrame, younger: np.ndarray, ids: np.ndarray, crs: pyproj.CRS
) -> gpd.GeoDataFrame:
    other = nodes["other"].to_numpy(dtype=np.intp)
    frame = pd.DataFrame(
        {
            "node_id": [f"N{i + 1}" for i in range(len(nodes))],
            "kind": nodes["kind"].to_numpy(dtype=object),
            "thrust_id": ids[nodes["thrust"].to_numpy(dtype=np.intp)],
            "end": nodes["end"].to_numpy(dtype=object),
            "part": nodes["part"].to_numpy(dtype=np.int64),
            "other_thrust": np.where(other >= 0, ids[np.maximum(other, 0)], ""),
            "angle": nodes["angle"].to_numpy(dtype=float),
            "gap_m": nodes["gap_m"].to_numpy(dtype=float),
            "younger": np.where(younger >= 0, ids[np.maximum(younger, 0)], ""),
        }
    )
    geom = shapely.points(nodes["x"].to_numpy(dtype=float), nodes["y"].to_numpy(dtype=float))
    return gpd.GeoDataFrame(frame, geometry=geom, crs=crs)


def _scanline_frame(pairs: pd.DataFrame, scan_no: np.ndarray, crs: pyproj.CRS) -> gpd.GeoDataFrame:
    ends = np.stack(
        [pairs[["x0", "y0"]].to_numpy(dtype=float), pairs[["x1", "y1"]].to_numpy(dtype=float)],
        axis=1,
    )
    frame = pd.DataFrame(
        {
            "scanline": scan_no[pairs["segment"].to_numpy(dtype=np.intp)].astype(np.int64),
            "hinterland_thrust": pairs["hinterland_thrust"].to_numpy(dtype=object),
            "foreland_thrust": pairs["foreland_thrust"].to_numpy(dtype=object),
            "pair": (
                pairs["hinterland_thrust"].astype(str) + "-" + pairs["foreland_thrust"].astype(str)
            ).to_numpy(dtype=object),
            "length_m": pairs["length_m"].to_numpy(dtype=float),
        }
    )
    geom = shapely.linestrings(ends) if len(ends) else np.zeros(0, dtype=object)
    return gpd.GeoDataFrame(frame, geometry=geom, crs=crs)
