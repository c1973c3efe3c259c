"""The review report: one self-contained HTML file and its Markdown twin.

Both are rendered from the same list of blocks (headings, paragraphs, tables,
figures), so they always say the same thing. Every section is optional and
appears only when its data is given; every text is escaped for its format.
"""

from __future__ import annotations

import base64
import datetime as _dt
import html
import logging
import os
import re
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pandas as pd

from thrustmap._version import __version__
from thrustmap.caution import CAUTION
from thrustmap.errors import InputError, OutputExistsError
from thrustmap.io.atomic import write_file
from thrustmap.provenance import Provenance
from thrustmap.webmap.payload import format_value, thumbnail_png

__all__ = ["ReportDocuments", "report_documents", "write_report"]

logger = logging.getLogger(__name__)

_MAX_REJECT_ROWS = 50
_ORDER_COLUMNS = ("thrust_id", "name", "rank", "formation_rank", "order", "sequence",
                  "out_of_sequence", "sequence_detail", "contradiction", "hw_side", "dip")
_FIGURE_WIDTH = 840  # pixels


@dataclass(frozen=True)
class _Block:
    kind: str  # "h1", "h2", "p", "caution", "table", "figure"
    text: str = ""
    table: pd.DataFrame | None = None
    image: Any = None


def _frame(data: pd.DataFrame) -> pd.DataFrame:
    """A plain table: geometry dropped, index reset."""
    frame = pd.DataFrame(data)
    geom = getattr(data, "_geometry_column_name", None)
    if geom in frame.columns:
        frame = frame.drop(columns=[geom])
    return frame.reset_index(drop=True)


def _validation(attitudes: pd.DataFrame | None, rejected: pd.DataFrame | None) -> list[_Block]:
    blocks = [_Block("h2", "Validation summary")]
    n_ok = len(attitudes) if attitudes is not None else None
    n_bad = len(rejected) if rejected is not None else None
    counts = [("accepted rows", n_ok), ("rejected rows", n_bad)]
    blocks.append(_Block("table", table=pd.DataFrame(
        [(k, v) for k, v in counts if v is not None], columns=["", "count"])))
    if rejected is not None and len(rejected):
        if "reason" not in rejected.columns:
            raise InputError("the rejects table has no 'reason' column", layer="attitudes_rejected")
        by_reason = rejected["reason"].astype(str).value_counts().rename_axis("reason")
        blocks.append(_Block("p", "Rejected rows by reason code:"))
        blocks.append(_Block("table", table=by_reason.reset_index(name="rows")))
        cols = [c for c in ("source_row", "reason", "field", "value", "message") if c in rejected]
        shown = rejected[cols].head(_MAX_REJECT_ROWS)
        more = len(rejected) - len(shown)
        note = f" (first {len(shown)}; {more} more in the layer attitudes_rejected)" if more else ""
        blocks.append(_Block("p", f"Rejected rows{note}:"))
        blocks.append(_Block("table", table=shown))
    if attitudes is not None and "flags" in attitudes.columns and len(attitudes):
        flags = attitudes["flags"].fillna("").astype(str).str.split(",").explode().str.strip()
        flags = flags[flags != ""]
        if len(flags):
            blocks.append(_Block("p", "Warnings on accepted rows (flags):"))
            blocks.append(_Block("table", table=flags.value_counts().rename_axis("flag")
                                 .reset_index(name="rows")))
    if attitudes is not None and "azimuth_ref_input" in attitudes.columns and len(attitudes):
        refs = attitudes["azimuth_ref_input"].astype(str).value_counts().rename_axis(
            "north reference of the input")
        blocks.append(_Block("p", "Azimuths were converted to true north from:"))
        blocks.append(_Block("table", table=refs.reset_index(name="rows")))
    return blocks


def _spacing(spacing: pd.DataFrame) -> list[_Block]:
    """Spacing statistics as the thrust analysis gives them: overall rows first, then per pair."""
    frame = _frame(spacing)
    blocks = [_Block("h2", "Thrust spacing")]
    if "hinterland_thrust" in frame.columns:
        overall = frame["hinterland_thrust"].fillna("").astype(str) == ""
        blocks += [
            _Block("p", "Spacing along the transport direction over all pairs and over the "
                        "pairs of in-sequence thrusts (metres; bootstrap interval of the mean):"),
            _Block("table", table=frame[overall].drop(columns=["hinterland_thrust",
                                                               "foreland_thrust"])),
            _Block("p", "Per pair of successive thrusts, hinterland to foreland:"),
            _Block("table", table=frame[~overall]),
        ]
    else:
        blocks.append(_Block("table", table=frame))
    return blocks


def _formation(order: pd.DataFrame | None, relations: pd.DataFrame | None) -> list[_Block]:
    blocks = [_Block("h2", "Thrust formation order")]
    if order is not None:
        frame = _frame(order)
        rank = next((c for c in ("rank", "formation_rank", "order") if c in frame.columns), None)
        if rank is not None:
            frame = frame.sort_values(rank, kind="stable", na_position="last")
        shown = [c for c in _ORDER_COLUMNS if c in frame.columns]
        if len(shown) >= 2:  # the order and its reasons; the full trace table is in the GeoPackage
            frame = frame[shown]
        blocks.append(_Block("p", "Order of formation, oldest first; out-of-sequence thrusts "
                                  "are marked."))
        blocks.append(_Block("table", table=frame))
    if relations is not None:
        blocks.append(_Block("p", "Evidence: the relations between thrusts the order rests on."))
        blocks.append(_Block("table", table=_frame(relations)))
    return blocks


def _provenance(prov: Provenance) -> list[_Block]:
    blocks = [_Block("h2", "Inputs and provenance"),
              _Block("p", f"Produced by thrustmap {prov.thrustmap_version} at {prov.created_utc}.")]
    if prov.inputs:
        blocks.append(_Block("table", table=pd.DataFrame(
            [(i.name, i.bytes, i.sha256) for i in prov.inputs],
            columns=["input file", "bytes", "SHA-256"])))
    if prov.tools:
        rows = [(t.name, "; ".join(f"{k} = {v}" for k, v in t.params.items()))
                for t in prov.tools]
        blocks.append(_Block("p", "Tools in the order they ran, with their parameters:"))
        blocks.append(_Block("table", table=pd.DataFrame(rows, columns=["tool", "parameters"])))
    return blocks


_CSS = """
body { font: 14px/1.5 system-ui, -apple-system, 'Segoe UI', sans-serif; color: #22252b;
       background: #f7f4ee; margin: 0; }
main { max-width: 980px; margin: 0 auto; padding: 24px 28px 48px; background: #fffdf9;
       box-shadow: 0 0 0 1px #e4dccd; }
h1 { color: #14213d; border-left: 5px solid #b4532a; padding-left: 10px; margin-bottom: 2px; }
h2 { color: #14213d; border-bottom: 1px solid #e4dccd; margin-top: 28px; }
.caution { background: #fff3e2; border: 1px solid #e0b788; color: #5a2a12; border-radius: 6px;
           padding: 8px 12px; }
.wide { overflow-x: auto; }
table { border-collapse: collapse; margin: 6px 0 12px; font-size: 13px; }
th, td { border: 1px solid #e4dccd; padding: 3px 8px; text-align: left; vertical-align: top; }
th { background: #f1ece2; font-weight: 600; }
td.num { text-align: right; font-variant-numeric: tabular-nums; }
figure { display: inline-block; vertical-align: top; margin: 8px 12px 8px 0; }
figure img { max-width: 420px; border: 1px solid #e4dccd; border-radius: 4px; background: #fff; }
figcaption { font-size: 12px; color: #5d5446; }
@media print { body { background: #fff; } main { box-shadow: none; } }
"""


def _html_table(frame: pd.DataFrame) -> str:
    if not len(frame):
        return "<p><em>no rows</em></p>"
    numeric = [pd.api.types.is_numeric_dtype(frame[c]) and not pd.api.types.is_bool_dtype(frame[c])
               for c in frame.columns]
    head = "".join(f"<th>{html.escape(str(c))}</th>" for c in frame.columns)
    rows = []
    for row in frame.itertuples(index=False, name=None):
        cells = "".join(
            f'<td class="num">{html.escape(format_value(v))}</td>' if num
            else f"<td>{html.escape(format_value(v))}</td>"
            for v, num in zip(row, numeric, strict=True)
        )
        rows.append(f"<tr>{cells}</tr>")
    return (f'<div class="wide"><table><thead><tr>{head}</tr></thead>'
            f"<tbody>{''.join(rows)}</tbody></table></div>")


def _render_html(blocks: list[_Block]) -> str:
    """Render blocks as one self-contained HTML page (figures embedded as data URIs)."""
    title = next((b.text for b in blocks if b.kind == "h1"), "thrustmap report")
    parts = []
    for b in blocks:
        if b.kind in ("h1", "h2", "p"):
            parts.append(f"<{b.kind}>{html.escape(b.text)}</{b.kind}>")
        elif b.kind == "caution":
            parts.append(f'<p class="caution"><strong>Caution.</strong> {html.escape(b.text)}</p>')
        elif b.kind == "table":
            parts.append(_html_table(b.table))
        elif b.kind == "figure":
            uri = "data:image/png;base64," + base64.b64encode(b.image[1]).decode("ascii")
            name = html.escape(b.text)
            parts.append(f'<figure><img src="{uri}" alt="stereonet {name}">'
                         f"<figcaption>{name}</figcaption></figure>")
    body = "\n".join(parts)
    return (f'<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n'
            f'<meta name="viewport" content="width=device-width, initial-scale=1">\n'
            f"<title>{html.escape(title)}</title>\n<style>{_CSS}</style>\n</head>\n"
            f"<body><main>\n{body}\n</main></body>\n</html>\n")


_MD_SPECIAL = re.compile(r"([\\`*_\[\]|#])")


def _md(text: str) -> str:
    """Markdown-safe text: HTML characters as entities, Markdown punctuation escaped."""
    text = html.escape(str(text), quote=False).replace("\n", " ")
    return _MD_SPECIAL.sub(r"\\\1", text)


def _md_table(frame: pd.DataFrame) -> str:
    if not len(frame):
        return "_no rows_"
    head = "| " + " | ".join(_md(c) or " " for c in frame.columns) + " |"
    rule = "|" + "|".join("---" for _ in frame.columns) + "|"
    rows = ["| " + " | ".join(_md(format_value(v)) for v in row) + " |"
            for row in frame.itertuples(index=False, name=None)]
    return "\n".join([head, rule, *rows])


def _slug(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9_-]+", "_", text).strip("_") or "figure"


def _render_markdown(blocks: list[_Block], *, figures_folder: str | None) -> str:
    """Render blocks as Markdown; figures link to their PNG in ``figures_folder`` (relative).

    Without a folder a figure is named, and left to the HTML, which embeds it.
    """
    parts = []
    for b in blocks:
        if b.kind == "h1":
            parts.append(f"# {_md(b.text)}")
        elif b.kind == "h2":
            parts.append(f"## {_md(b.text)}")
        elif b.kind == "p":
            parts.append(_md(b.text))
        elif b.kind == "caution":
            parts.append(f"> **Caution.** {_md(b.text)}")
        elif b.kind == "table":
            parts.append(_md_table(b.table))
        elif b.kind == "figure" and figures_folder is None:
            parts.append(f"_Stereonet {_md(b.text)}: in the HTML report._")
        elif b.kind == "figure":
            target = f"{figures_folder}/{b.image[0]}".replace(" ", "%20")
            parts.append(f"![stereonet {_md(b.text)}]({target})")
    return "\n\n".join(parts) + "\n"


def write_report(
    path: str | os.PathLike[str],
    *,
    attitudes: pd.DataFrame | None = None,
    rejected: pd.DataFrame | None = None,
    domain_stats: pd.DataFrame | None = None,
    fold_table: pd.DataFrame | None = None,
    figures: Mapping[str, Any] | None = None,
    spacing: pd.DataFrame | None = None,
    formation_order: pd.DataFrame | None = None,
    relations: pd.DataFrame | None = None,
    provenance: Provenance | None = None,
    title: str = "thrustmap review report",
    caution: str = CAUTION,
    overwrite: bool = False,
) -> dict[str, Path]:
    """Write the review report as HTML (self-contained) and its Markdown twin.

    Parameters
    ----------
    path : str or path-like
        Target ``.html`` file; the Markdown goes beside it with suffix ``.md``.
    attitudes, rejected : DataFrame, optional
        Accepted and rejected rows of the ingest: the validation summary
        (counts, rejections by reason code, flags, north references).
    domain_stats : DataFrame, optional
        One row per domain with its statistics.
    fold_table : DataFrame, optional
        Fold axes, interlimb angles and classes.
    figures : mapping, optional
        Figure name to stereonet (PNG path, PNG bytes or matplotlib Figure).
        The HTML embeds them; the Markdown links PNG copies written to
        ``<stem>_figures/`` beside it.
    spacing : DataFrame, optional
        Thrust spacing statistics as :func:`thrustmap.analyze_thrusts` gives
        them (``pair``, ``hinterland_thrust``, ``foreland_thrust``, ``n``,
        ``mean_m``, ...): the overall rows, then the pairs.
    formation_order, relations : DataFrame, optional
        Thrusts with their formation ``rank`` (1 = oldest) and out-of-sequence
        flag; the relations (evidence) the order rests on.
    provenance : Provenance, optional
        Version, time, inputs with SHA-256 and tool parameters.
    title : str
        Report title.
    caution : str
        Caution shown at the top and the bottom.
    overwrite : bool, default False
        Replace existing files.

    Returns
    -------
    dict of str to Path
        ``html``, ``markdown`` and ``figure:<file>`` for each figure written.

    Raises
    ------
    OutputExistsError
        When an output exists and ``overwrite`` is false (nothing is written).
    InputError
        For a table missing the columns its section needs, or an unreadable figure.

    Examples
    --------
    >>> import tempfile, pathlib, pandas as pd
    >>> out = write_report(pathlib.Path(tempfile.mkdtemp()) / "report.html",
    ...                    spacing=pd.DataFrame({"pair": ["all"], "n": [12], "mean_m": [2500.0]}))
    >>> "Thrust spacing" in out["markdown"].read_text(encoding="utf-8")
    True
    """
    target = Path(path)
    md_path = target.with_suffix(".md")
    folder = f"{target.stem}_figures"
    docs = report_documents(
        attitudes=attitudes, rejected=rejected, domain_stats=domain_stats, fold_table=fold_table,
        figures=figures, spacing=spacing, formation_order=formation_order, relations=relations,
        provenance=provenance, title=title, caution=caution, figures_folder=folder,
    )
    figure_paths = {name: target.parent / folder / name for name in docs.figures}
    existing = [str(p) for p in (target, md_path, *figure_paths.values()) if p.exists()]
    if existing and not overwrite:
        raise OutputExistsError(
            f"output exists: {', '.join(existing)}; pass overwrite=True (--overwrite) to replace it")
    written = {f"figure:{name}": write_file(p, docs.figures[name], overwrite=True)
               for name, p in figure_paths.items()}
    written["markdown"] = write_file(md_path, docs.markdown, overwrite=True)
    written["html"] = write_file(target, docs.html, overwrite=True)
    logger.info("wrote report %s and %s", target, md_path)
    return written


@dataclass(frozen=True)
class ReportDocuments:
    """The report's two documents and the figure files the Markdown links to.

    Attributes
    ----------
    html : str
        Self-contained HTML page (figures embedded).
    markdown : str
        Markdown twin; figures linked as ``<figures_folder>/<file>``.
    figures : dict of str to bytes
        PNG file name (inside the figures folder) to its bytes.
    """

    html: str
    markdown: str
    figures: dict[str, bytes]


def report_documents(
    *,
    attitudes: pd.DataFrame | None = None,
    rejected: pd.DataFrame | None = None,
    domain_stats: pd.DataFrame | None = None,
    fold_table: pd.DataFrame | None = None,
    figures: Mapping[str, Any] | None = None,
    spacing: pd.DataFrame | None = None,
    formation_order: pd.DataFrame | None = None,
    relations: pd.DataFrame | None = None,
    provenance: Provenance | None = None,
    title: str = "thrustmap review report",
    caution: str = CAUTION,
    figures_folder: str | None = "report_figures",
) -> ReportDocuments:
    """The report's HTML and Markdown and its figure files, without writing anything.

    Parameters are those of :func:`write_report`; ``figures_folder`` is the
    folder, relative to the Markdown file, that will hold the figures (None:
    the Markdown names each figure and leaves it to the HTML).

    Raises
    ------
    InputError
        For a table missing the columns its section needs, or an unreadable figure.

    Examples
    --------
    >>> docs = report_documents(title="Empty run")
    >>> docs.markdown.splitlines()[0], docs.figures
    ('# Empty run', {})
    """
    stamp = _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    blocks = [_Block("h1", title), _Block("p", f"Generated by thrustmap {__version__} on {stamp}."),
              _Block("caution", caution)]
    if attitudes is not None or rejected is not None:
        blocks += _validation(attitudes, rejected)
    if domain_stats is not None:
        blocks += [_Block("h2", "Statistics per domain"), _Block("table", table=_frame(domain_stats))]
    if fold_table is not None:
        blocks += [_Block("h2", "Folds"), _Block("table", table=_frame(fold_table))]
    if figures:
        blocks.append(_Block("h2", "Stereonets"))
        taken: set[str] = set()
        for name, fig in figures.items():
            stem = _slug(str(name))
            file = next(f"{stem}{s}.png" for s in ("", *range(2, len(figures) + 2))
                        if f"{stem}{s}.png" not in taken)
            taken.add(file)
            blocks.append(_Block("figure", str(name),
                                 image=(file, thumbnail_png(fig, width=_FIGURE_WIDTH))))
    if spacing is not None:
        blocks += _spacing(spacing)
    if formation_order is not None or relations is not None:
        blocks += _formation(formation_order, relations)
    if provenance is not None:
        blocks += _provenance(provenance)
    blocks.append(_Block("caution", caution))
    return ReportDocuments(
        html=_render_html(blocks),
        markdown=_render_markdown(blocks, figures_folder=figures_folder),
        figures={b.image[0]: b.image[1] for b in blocks if b.kind == "figure"},
    )
