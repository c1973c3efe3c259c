"""Formation order of thrusts: relations, contradictions, ranks and the sequence flag.

"Formed after" relations come from

(a) map-view cross-cutting: a thrust that truncates another (the other's end
    abuts it) is younger; at a crossing of two traces, the one that cuts
    through more of the network (crosses or truncates more thrusts) is taken
    as younger, and a tie is left undetermined;
(b) relative-age constraints given by the user;
(c) the in-sequence default: of two thrusts that follow each other along the
    scanlines, the foreland one is younger. It has the lowest weight and is
    used only for pairs that (a) and (b), directly or through a chain, leave
    unrelated.

Cycles among (a) and (b) are contradictions: they are reported with the
relations involved and the thrusts in them are marked, never silently broken;
ranks are still produced (members of a cycle are ordered from the hinterland).
Ranks follow a topological order that keeps every non-contradicted relation
and, where free, places the more hinterland thrust first. A thrust younger
than a thrust lying foreland of it is out of sequence (``out``).
"""

from __future__ import annotations

import heapq
import logging
from collections import deque
from dataclasses import dataclass

import numpy as np
import pandas as pd
from numpy.typing import ArrayLike, NDArray
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components

__all__ = [
    "EVIDENCE_WEIGHTS",
    "RELATION_COLUMNS",
    "CONTRADICTION_COLUMNS",
    "Order",
    "cross_cutting_relations",
    "constraint_relations",
    "in_sequence_candidates",
    "foreland_signs",
    "formation_order",
]

log = logging.getLogger(__name__)

EVIDENCE_WEIGHTS = {"truncation": 3, "constraint": 3, "crossing": 2, "in_sequence": 1}
"""Weight of each kind of evidence (reported; the in-sequence default is the weakest)."""

RELATION_COLUMNS = [
    "relation_id",
    "younger",
    "older",
    "evidence",
    "weight",
    "status",
    "contradiction",
    "detail",
    "x",
    "y",
]
CONTRADICTION_COLUMNS = ["contradiction", "thrusts", "cycle", "relations", "message"]
_STRONG = ["younger", "older", "evidence", "detail", "x", "y"]


def cross_cutting_relations(
    nodes: pd.DataFrame, ids: ArrayLike
) -> tuple[pd.DataFrame, NDArray[np.intp]]:
    """Formed-after relations from truncations and crossings in the node table.

    Parameters
    ----------
    nodes : DataFrame
        Node table of :func:`thrustmap.thrusts.topology.build_topology`.
    ids : array_like of str
        Thrust id per trace index.

    Returns
    -------
    relations : DataFrame
        ``younger``, ``older`` (trace indices), ``evidence`` (``truncation`` or
        ``crossing``), ``detail``, ``x``, ``y``.
    younger : ndarray of int
        Per node, the trace index it shows to be younger, -1 for none.

    Examples
    --------
    >>> import pandas as pd
    >>> nodes = pd.DataFrame({"kind": ["truncation"], "thrust": [1], "other": [0],
    ...     "end": ["end"], "part": [0], "angle": [90.0], "x": [0.0], "y": [0.0]})
    >>> rel, young = cross_cutting_relations(nodes, ["T1", "T2"])
    >>> rel[["younger", "older", "evidence"]].values.tolist(), young.tolist()
    ([[0, 1, 'truncation']], [0])
    """
    ids = np.asarray(ids, dtype=object)
    kind = nodes["kind"].to_numpy()
    thrust = nodes["thrust"].to_numpy(dtype=np.intp)
    other = nodes["other"].to_numpy(dtype=np.intp)
    angle = nodes["angle"].to_numpy(dtype=float)
    trunc = kind == "truncation"
    cross = kind == "crossing"
    cutter = np.concatenate([other[trunc], thrust[cross], other[cross]])
    cut = np.concatenate([thrust[trunc], other[cross], thrust[cross]])
    links = (
        np.unique(np.stack([cutter, cut], axis=1), axis=0)
        if len(cutter)
        else np.zeros((0, 2), np.intp)
    )
    degree = (
        np.bincount(links[:, 0], minlength=len(ids)) if len(links) else np.zeros(len(ids), np.intp)
    )
    younger = np.full(len(nodes), -1, dtype=np.intp)
    younger[trunc] = other[trunc]
    da, db = degree[thrust[cross]], degree[other[cross]]
    younger[cross] = np.where(da > db, thrust[cross], np.where(db > da, other[cross], -1))

    t_idx = np.flatnonzero(trunc)
    end = nodes["end"].to_numpy(dtype=object)
    part = nodes["part"].to_numpy()
    t_detail = [
        f"{ids[a]} ({e} of part {p}) abuts {ids[b]} at {g:.0f} degrees: "
        "the truncating thrust is younger"
        for a, b, e, p, g in zip(
            thrust[t_idx].tolist(),
            other[t_idx].tolist(),
            end[t_idx],
            part[t_idx].tolist(),
            angle[t_idx].tolist(),
            strict=True,
        )
    ]
    c_idx = np.flatnonzero(cross & (younger >= 0))
    c_detail = []
    for i in c_idx:
        y = younger[i]
        o = other[i] if y == thrust[i] else thrust[i]
        c_detail.append(
            f"{ids[y]} crosses {ids[o]} at {angle[i]:.0f} degrees; {ids[y]} cuts through "
            f"{degree[y]} thrusts, {ids[o]} through {degree[o]}: the thrust cutting through "
            "more of the network is taken as younger"
        )
    undecided = int(np.sum(cross & (younger < 0)))
    if undecided:
        log.info(
            "%d crossings between thrusts cutting equally many others: no age relation", undecided
        )
    c_older = np.where(younger[c_idx] == thrust[c_idx], other[c_idx], thrust[c_idx])
    rel = pd.DataFrame(
        {
            "younger": np.concatenate([other[t_idx], younger[c_idx]]).astype(np.intp),
            "older": np.concatenate([thrust[t_idx], c_older]).astype(np.intp),
            "evidence": ["truncation"] * len(t_idx) + ["crossing"] * len(c_idx),
            "detail": t_detail + c_detail,
            "x": nodes["x"].to_numpy(dtype=float)[np.concatenate([t_idx, c_idx])],
            "y": nodes["y"].to_numpy(dtype=float)[np.concatenate([t_idx, c_idx])],
        },
        columns=_STRONG,
    )
    return rel, younger


def constraint_relations(constraints: pd.DataFrame, index_of: dict[str, int]) -> pd.DataFrame:
    """Formed-after relations from validated age constraints (``younger``, ``older``, ``note``).

    Examples
    --------
    >>> import pandas as pd
    >>> c = pd.DataFrame({"source_row": [1], "younger": ["T2"], "older": ["T1"], "note": ["growth strata"]})
    >>> constraint_relations(c, {"T1": 0, "T2": 1})[["younger", "older", "detail"]].values.tolist()
    [[1, 0, 'age constraint, row 1: growth strata']]
    """
    rows = constraints["source_row"].to_numpy()
    notes = constraints["note"].fillna("").astype(str).to_numpy()
    return pd.DataFrame(
        {
            "younger": np.array([index_of[v] for v in constraints["younger"]], dtype=np.intp),
            "older": np.array([index_of[v] for v in constraints["older"]], dtype=np.intp),
            "evidence": "constraint",
            "detail": [
                f"age constraint, row {r}" + (f": {t}" if t else "")
                for r, t in zip(rows, notes, strict=True)
            ],
            "x": np.nan,
            "y": np.nan,
        },
        columns=_STRONG,
    )


def in_sequence_candidates(pairs: pd.DataFrame) -> pd.DataFrame:
    """Thrust pairs that follow each other on scanlines, with the majority hinterland/foreland order.

    Parameters
    ----------
    pairs : DataFrame
        Successive pairs with ``hinterland`` and ``foreland`` trace indices
        (one row per scanline segment where they follow each other).

    Returns
    -------
    DataFrame
        ``older`` (hinterland), ``younger`` (foreland), ``n_for`` (scanlines
        with that order), ``n_against`` (scanlines with the opposite order);
        pairs with a tied count are left out.

    Examples
    --------
    >>> import pandas as pd
    >>> p = pd.DataFrame({"hinterland": [0, 0, 1], "foreland": [1, 1, 0]})
    >>> in_sequence_candidates(p).values.tolist()
    [[0, 1, 2, 1]]
    """
    h = pairs["hinterland"].to_numpy(dtype=np.intp)
    f = pairs["foreland"].to_numpy(dtype=np.intp)
    lo, hi = np.minimum(h, f), np.maximum(h, f)
    frame = pd.DataFrame({"lo": lo, "hi": hi, "up": (h == lo).astype(int)})
    g = frame.groupby(["lo", "hi"], sort=True)["up"].agg(["sum", "size"]).reset_index()
    up, down = g["sum"].to_numpy(), (g["size"] - g["sum"]).to_numpy()
    keep = up != down
    older = np.where(up > down, g["lo"], g["hi"])[keep]
    younger = np.where(up > down, g["hi"], g["lo"])[keep]
    return pd.DataFrame(
        {
            "older": older.astype(np.intp),
            "younger": younger.astype(np.intp),
            "n_for": np.maximum(up, down)[keep].astype(np.int64),
            "n_against": np.minimum(up, down)[keep].astype(np.int64),
        }
    )


def foreland_signs(
    a: ArrayLike, b: ArrayLike, intersections: pd.DataFrame, positions: ArrayLike
) -> NDArray[np.int8]:
    """+1 where thrust ``b`` lies foreland of thrust ``a``, -1 where hinterland, 0 undecided.

    Decided by the majority over the scanline segments both cross (comparing
    their mean positions along transport), else by the positions of the
    traces' centroids along transport.

    Examples
    --------
    >>> import pandas as pd
    >>> inter = pd.DataFrame({"segment": [0, 0], "thrust": [0, 1], "u": [10.0, 5.0]})
    >>> foreland_signs([0], [1], inter, [0.0, 100.0]).tolist()
    [-1]
    """
    a = np.asarray(a, dtype=np.intp)
    b = np.asarray(b, dtype=np.intp)
    pos = np.asarray(positions, dtype=float)
    fallback = np.sign(pos[b] - pos[a]).astype(np.int8)
    if len(a) == 0 or len(intersections) == 0:
        return fallback
    mean_u = intersections.groupby(["segment", "thrust"], as_index=False)["u"].mean()
    pairs = pd.DataFrame({"pair": np.arange(len(a)), "a": a, "b": b})
    left = pairs.merge(mean_u.rename(columns={"thrust": "a", "u": "ua"}), on="a")
    both = left.merge(mean_u.rename(columns={"thrust": "b", "u": "ub"}), on=["segment", "b"])
    votes = np.zeros(len(a))
    np.add.at(
        votes, both["pair"].to_numpy(), np.sign(both["ub"].to_numpy() - both["ua"].to_numpy())
    )
    shared = np.zeros(len(a), dtype=bool)
    shared[both["pair"].to_numpy()] = True
    return np.where(shared, np.sign(votes), fallback).astype(np.int8)


@dataclass(frozen=True)
class Order:
    """Result of :func:`formation_order` (trace indices throughout).

    Attributes
    ----------
    rank : ndarray of int
        1 = oldest.
    sequence : ndarray of str
        ``in`` or ``out``.
    sequence_detail : ndarray of str
        For ``out`` thrusts, the foreland thrust they are younger than.
    contradiction : ndarray of str
        Contradiction id ("C1", ...) of thrusts in a cycle, "" otherwise.
    relations : DataFrame
        ``RELATION_COLUMNS`` with thrust ids.
    contradictions : DataFrame
        ``CONTRADICTION_COLUMNS``.
    """

    rank: NDArray[np.int64]
    sequence: NDArray[np.object_]
    sequence_detail: NDArray[np.object_]
    contradiction: NDArray[np.object_]
    relations: pd.DataFrame
    contradictions: pd.DataFrame


def _csr(
    src: NDArray[np.intp], dst: NDArray[np.intp], n: int
) -> tuple[NDArray[np.intp], NDArray[np.intp]]:
    """Edges sorted by source: (pointer per node, edge order)."""
    order = np.argsort(src, kind="stable")
    ptr = np.searchsorted(src[order], np.arange(n + 1))
    return ptr, order


def _closure(
    src: NDArray[np.intp], dst: NDArray[np.intp], n: int
) -> tuple[NDArray[np.uint8], NDArray[np.intp]]:
    """Reachability bitsets of a DAG restricted to the nodes that have edges.

    Returns the packed bit matrix over the dense node numbering and the map
    node -> dense index (-1 for nodes without edges).
    """
    nodes = np.unique(np.concatenate([src, dst]))
    dense = np.full(n, -1, dtype=np.intp)
    dense[nodes] = np.arange(len(nodes))
    s, d = dense[src], dense[dst]
    m = len(nodes)
    reach = np.zeros((m, (m + 7) // 8), dtype=np.uint8)
    ptr, order = _csr(s, d, m)
    indeg = np.bincount(d, minlength=m)
    stack = list(np.flatnonzero(indeg == 0))
    topo = []
    while stack:
        v = stack.pop()
        topo.append(v)
        for e in order[ptr[v] : ptr[v + 1]]:
            indeg[d[e]] -= 1
            if indeg[d[e]] == 0:
                stack.append(d[e])
    bit = (np.uint8(128) >> (np.arange(m) & 7).astype(np.uint8)).astype(np.uint8)
    for v in reversed(topo):
        children = d[order[ptr[v] : ptr[v + 1]]]
        if len(children):
            reach[v] = np.bitwise_or.reduce(reach[children], axis=0)
            np.bitwise_or.at(reach[v], children >> 3, bit[children])
    return reach, dense


def _reaches(
    reach: NDArray[np.uint8], dense: NDArray[np.intp], a: NDArray[np.intp], b: NDArray[np.intp]
) -> NDArray[np.bool_]:
    da, db = dense[a], dense[b]
    ok = (da >= 0) & (db >= 0)
    out = np.zeros(len(a), dtype=bool)
    if ok.any():
        row, col = da[ok], db[ok]
        out[ok] = ((reach[row, col >> 3] >> (7 - (col & 7)).astype(np.uint8)) & 1).astype(bool)
    return out


def _cycle(members: NDArray[np.intp], src: NDArray[np.intp], dst: NDArray[np.intp]) -> list[int]:
    """One directed cycle through the first member, within a strongly connected set."""
    inside = np.isin(src, members) & np.isin(dst, members)
    adj: dict[int, list[int]] = {}
    for s, d in zip(src[inside].tolist(), dst[inside].tolist(), strict=True):
        adj.setdefault(s, []).append(d)
    start = int(members[0])
    parent = {start: -1}
    queue = deque([start])
    while queue:
        v = queue.popleft()
        for w in adj.get(v, []):
            if w == start:
                path = [v]
                while parent[path[-1]] != -1:
                    path.append(parent[path[-1]])
                return [*reversed(path), start]
            if w not in parent:
                parent[w] = v
                queue.append(w)
    return [start]


def formation_order(
    ids: ArrayLike,
    positions: ArrayLike,
    relations: pd.DataFrame,
    candidates: pd.DataFrame,
    *,
    intersections: pd.DataFrame | None = None,
) -> Order:
    """Rank thrusts from oldest to youngest and flag out-of-sequence thrusts.

    Parameters
    ----------
    ids : array_like of str
        Thrust id per trace index.
    positions : array_like of float
        Position of each trace along the transport direction (metres; larger =
        more foreland).
    relations : DataFrame
        Cross-cutting and constraint relations (``younger``, ``older`` trace
        indices, ``evidence``, ``detail``, ``x``, ``y``).
    candidates : DataFrame
        In-sequence candidates from :func:`in_sequence_candidates`.
    intersections : DataFrame, optional
        Scanline intersections (``segment``, ``thrust``, ``u``), to decide which
        of two related thrusts lies foreland (see :func:`foreland_signs`).

    Returns
    -------
    Order

    Examples
    --------
    >>> import pandas as pd
    >>> rel = pd.DataFrame({"younger": [0], "older": [2], "evidence": ["constraint"],
    ...     "detail": ["age constraint, row 1"], "x": [float("nan")], "y": [float("nan")]})
    >>> cand = pd.DataFrame({"older": [0, 1], "younger": [1, 2], "n_for": [5, 5], "n_against": [0, 0]})
    >>> o = formation_order(["T1", "T2", "T3"], [0.0, 1000.0, 2000.0], rel, cand)
    >>> o.rank.tolist(), o.sequence.tolist()
    ([3, 1, 2], ['out', 'in', 'in'])
    """
    ids = np.asarray(ids, dtype=object)
    pos = np.asarray(positions, dtype=float)
    n = len(ids)
    rel = relations.reset_index(drop=True)
    ry = rel["younger"].to_numpy(dtype=np.intp)
    ro = rel["older"].to_numpy(dtype=np.intp)

    graph = coo_matrix((np.ones(len(ro)), (ro, ry)), shape=(n, n)).tocsr()
    n_comp, comp = connected_components(graph, directed=True, connection="strong")
    size = np.bincount(comp, minlength=n_comp)
    comp_pos = np.bincount(comp, weights=pos, minlength=n_comp) / size
    cyclic = size > 1

    cs, cd = comp[ro], comp[ry]
    between = cs != cd
    edges = (
        np.unique(np.stack([cs[between], cd[between]], axis=1), axis=0)
        if between.any()
        else np.zeros((0, 2), np.intp)
    )
    es, ed = edges[:, 0], edges[:, 1]

    cand = candidates.reset_index(drop=True)
    qo = cand["older"].to_numpy(dtype=np.intp)
    qy = cand["younger"].to_numpy(dtype=np.intp)
    qcs, qcd = comp[qo], comp[qy]
    if len(es):
        reach, dense = _closure(es, ed, n_comp)
        related = _reaches(reach, dense, qcs, qcd) | _reaches(reach, dense, qcd, qcs)
    else:
        related = np.zeros(len(qo), dtype=bool)
    silent = (qcs != qcd) & ~related
    q_edges, q_of_cand = (
        np.unique(np.stack([qcs[silent], qcd[silent]], axis=1), axis=0, return_inverse=True)
        if silent.any()
        else (np.zeros((0, 2), np.intp), np.zeros(0, np.intp))
    )
    q_of_cand = np.asarray(q_of_cand).reshape(-1)
    comp_order, q_overridden = _kahn(n_comp, comp_pos, es, ed, q_edges[:, 0], q_edges[:, 1])

    comp_rank = np.empty(n_comp, dtype=np.int64)
    comp_rank[comp_order] = np.arange(n_comp)
    order = np.lexsort((np.arange(n), pos, comp_rank[comp]))
    rank = np.empty(n, dtype=np.int64)
    rank[order] = np.arange(1, n + 1)

    # contradictions, labelled in rank order
    cyc = np.flatnonzero(cyclic)
    cyc = cyc[np.argsort(comp_rank[cyc])]
    comp_label = np.full(n_comp, "", dtype=object)
    comp_label[cyc] = [f"C{i + 1}" for i in range(len(cyc))]
    contradiction = comp_label[comp]

    rel_ids = [f"R{i + 1}" for i in range(len(rel))]
    in_cycle = cyclic[cs] & (cs == cd)
    strong = pd.DataFrame(
        {
            "relation_id": rel_ids,
            "younger": ids[ry] if len(ry) else np.zeros(0, object),
            "older": ids[ro] if len(ro) else np.zeros(0, object),
            "evidence": rel["evidence"].to_numpy(dtype=object),
            "weight": [EVIDENCE_WEIGHTS[e] for e in rel["evidence"]],
            "status": np.where(in_cycle, "contradicted", "used"),
            "contradiction": np.where(in_cycle, contradiction[ro] if len(ro) else "", ""),
            "detail": rel["detail"].to_numpy(dtype=object),
            "x": rel["x"].to_numpy(dtype=float),
            "y": rel["y"].to_numpy(dtype=float),
        },
        columns=RELATION_COLUMNS,
    )
    qi = np.flatnonzero(silent)
    q_status = np.where(
        q_overridden[q_of_cand] if len(qi) else np.zeros(0, bool), "overridden", "used"
    )
    n_for = cand["n_for"].to_numpy()[qi]
    n_tot = n_for + cand["n_against"].to_numpy()[qi]
    default = pd.DataFrame(
        {
            "relation_id": [f"R{len(rel) + i + 1}" for i in range(len(qi))],
            "younger": ids[qy[qi]] if len(qi) else np.zeros(0, object),
            "older": ids[qo[qi]] if len(qi) else np.zeros(0, object),
            "evidence": "in_sequence",
            "weight": EVIDENCE_WEIGHTS["in_sequence"],
            "status": q_status,
            "contradiction": "",
            "detail": [
                f"{ids[y]} follows {ids[o]} toward the foreland on {a} of {t} scanline segments "
                "and no cross-cutting or constraint relates them: in-sequence default"
                + ("; overridden to keep the other relations" if s == "overridden" else "")
                for y, o, a, t, s in zip(qy[qi], qo[qi], n_for, n_tot, q_status, strict=True)
            ],
            "x": np.nan,
            "y": np.nan,
        },
        columns=RELATION_COLUMNS,
    )
    table = pd.concat([strong, default], ignore_index=True) if len(default) else strong
    table = table.astype({"relation_id": object, "weight": "int64", "x": "float64", "y": "float64"})

    contradictions = []
    for c in cyc:
        members = np.flatnonzero(comp == c)
        members = members[np.argsort(pos[members], kind="stable")]
        path = _cycle(members, ro, ry)
        inside = np.flatnonzero((cs == c) & (cd == c))
        label = comp_label[c]
        chain = " -> ".join(ids[path])
        contradictions.append(
            {
                "contradiction": label,
                "thrusts": ",".join(ids[members]),
                "cycle": chain,
                "relations": ",".join(rel_ids[i] for i in inside),
                "message": (
                    f"relations {', '.join(rel_ids[i] for i in inside)} form a cycle: each thrust in "
                    f"{chain} formed before the next; their ranks follow their position "
                    "from the hinterland and must be reviewed"
                ),
            }
        )
        log.warning("contradiction %s: %s", label, contradictions[-1]["message"])
    contra = pd.DataFrame(contradictions, columns=CONTRADICTION_COLUMNS)

    sequence, detail = _sequence(ids, pos, rank, ro, ry, qo, qy, cand, intersections)
    return Order(rank, sequence, detail, contradiction, table, contra)


def _kahn(
    n: int,
    priority: NDArray[np.float64],
    ss: NDArray[np.intp],
    sd: NDArray[np.intp],
    qs: NDArray[np.intp],
    qd: NDArray[np.intp],
) -> tuple[list[int], NDArray[np.bool_]]:
    """Topological order keeping every strong edge and as many default edges as possible.

    Among the nodes free to go next, the one with the smallest priority (most
    hinterland) goes first. When the default edges alone block every node, the
    most hinterland node free of strong edges goes next and its remaining
    default in-edges are marked overridden.
    """
    s_ptr, s_ord = (a.tolist() for a in _csr(ss, sd, n))
    q_ptr, q_ord = (a.tolist() for a in _csr(qs, qd, n))
    qin_ptr, qin_ord = (a.tolist() for a in _csr(qd, qs, n))
    sd_l, qd_l, qs_l = sd.tolist(), qd.tolist(), qs.tolist()
    prio = np.asarray(priority, dtype=float).tolist()
    indeg_s = np.bincount(sd, minlength=n).tolist()
    indeg_q = np.bincount(qd, minlength=n).tolist()
    alive = [True] * len(qs_l)
    overridden = np.zeros(len(qs_l), dtype=bool)
    placed = [False] * n
    queued = [False] * n
    ready = [(prio[v], v) for v in range(n) if indeg_s[v] == 0 and indeg_q[v] == 0]
    blocked = [(prio[v], v) for v in range(n) if indeg_s[v] == 0 and indeg_q[v] > 0]
    heapq.heapify(ready)
    heapq.heapify(blocked)
    for _, v in ready:
        queued[v] = True
    out: list[int] = []
    while len(out) < n:
        if not ready:
            while True:
                _, v = heapq.heappop(blocked)
                if not queued[v]:
                    break
            for e in qin_ord[qin_ptr[v] : qin_ptr[v + 1]]:
                if alive[e] and not placed[qs_l[e]]:
                    alive[e] = False
                    overridden[e] = True
            indeg_q[v] = 0
            queued[v] = True
            heapq.heappush(ready, (prio[v], v))
        _, v = heapq.heappop(ready)
        placed[v] = True
        out.append(v)
        for e in s_ord[s_ptr[v] : s_ptr[v + 1]]:
            w = sd_l[e]
            indeg_s[w] -= 1
            if indeg_s[w] == 0:
                if indeg_q[w] == 0:
                    queued[w] = True
                    heapq.heappush(ready, (prio[w], w))
                else:
                    heapq.heappush(blocked, (prio[w], w))
        for e in q_ord[q_ptr[v] : q_ptr[v + 1]]:
            if not alive[e]:
                continue
            w = qd_l[e]
            indeg_q[w] -= 1
            if indeg_q[w] == 0 and indeg_s[w] == 0 and not queued[w]:
                queued[w] = True
                heapq.heappush(ready, (prio[w], w))
    return out, overridden


def _sequence(
    ids: NDArray[np.object_],
    pos: NDArray[np.float64],
    rank: NDArray[np.int64],
    ro: NDArray[np.intp],
    ry: NDArray[np.intp],
    qo: NDArray[np.intp],
    qy: NDArray[np.intp],
    cand: pd.DataFrame,
    intersections: pd.DataFrame | None,
) -> tuple[NDArray[np.object_], NDArray[np.object_]]:
    """``out`` for a thrust ranked younger than a related thrust lying foreland of it."""
    inter = (
        intersections
        if intersections is not None
        else pd.DataFrame(columns=["segment", "thrust", "u"])
    )
    sign_strong = foreland_signs(ro, ry, inter, pos)
    a = np.concatenate([ro, qo])
    b = np.concatenate([ry, qy])
    sign = np.concatenate([sign_strong, np.ones(len(qo), dtype=np.int8)])
    a_younger = rank[a] > rank[b]
    young = np.where(a_younger, a, b)
    old = np.where(a_younger, b, a)
    old_foreland = np.where(a_younger, sign > 0, sign < 0)
    hit = pd.DataFrame({"young": young[old_foreland], "old": old[old_foreland]})
    hit = hit.assign(rank=rank[hit["old"].to_numpy()]).sort_values(["young", "rank"])
    first = hit.drop_duplicates("young")
    sequence = np.full(len(ids), "in", dtype=object)
    detail = np.full(len(ids), "", dtype=object)
    yv = first["young"].to_numpy(dtype=np.intp)
    ov = first["old"].to_numpy(dtype=np.intp)
    sequence[yv] = "out"
    detail[yv] = [f"younger than {ids[o]}, which lies foreland of it" for o in ov]
    return sequence, detail
