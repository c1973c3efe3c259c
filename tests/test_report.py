"""The review report: sections, escaping, statistics, figures, twins, atomic writes."""

from __future__ import annotations

import re
from html.parser import HTMLParser

import matplotlib.pyplot as plt
import pandas as pd
import pytest
from PIL import Image

from tests.deliver_data import attitudes, domains, fold_axes, rejected, thrust_traces
from thrustmap.caution import CAUTION
from thrustmap.errors import OutputExistsError
from thrustmap.provenance import make_provenance
from thrustmap.report import report_documents, write_report
from thrustmap.thrusts.spacing import spacing_statistics

# Segments between successive thrusts on the scanlines (metres along transport).
PAIRS = pd.DataFrame({"hinterland_thrust": ["T1", "T1", "T2", "T2", "T3"],
                      "foreland_thrust": ["T2", "T2", "T3", "T3", "T4"],
                      "length_m": [2000.0, 2100.0, 2500.0, 2450.0, 3100.0]})
SPACING = spacing_statistics(PAIRS, seed=0, n_boot=200)
RELATIONS = pd.DataFrame({"older": ["T1", "T3"], "younger": ["T3", "T2"],
                          "evidence": ["T3 cuts T1 footwall", "T2 cuts <T3> sheet"]})


class _Tags(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


def _parse(page: str) -> _Tags:
    p = _Tags()
    p.feed(page)
    return p


def _full(tmp_path, **kw):
    figure = tmp_path / "stereonet_D1.png"
    Image.new("RGB", (500, 500), "white").save(figure)
    fig, _ = plt.subplots(figsize=(3, 3))
    bad = rejected()
    bad.loc[1, "value"] = "<script>alert(1)</script>"
    return write_report(
        tmp_path / "report.html",
        attitudes=attitudes(), rejected=bad, domain_stats=domains(), fold_table=fold_axes(),
        figures={"D1": figure, "D2 | all poles": fig}, spacing=SPACING,
        formation_order=thrust_traces(), relations=RELATIONS,
        provenance=make_provenance(inputs=[figure], tools=[("spacing", {"azimuth": 95.0})]),
        title="Synthetic <belt> review", **kw,
    )


def test_full_report_sections_and_escaping(tmp_path):
    out = _full(tmp_path)
    page = out["html"].read_text(encoding="utf-8")
    parsed = _parse(page)
    assert "script" not in parsed.tags  # the report runs nothing
    assert "<script>alert(1)</script>" in "".join(parsed.text)  # ... and shows the text
    assert "<belt>" not in page and "Synthetic &lt;belt&gt; review" in page
    for heading in ("Validation summary", "Statistics per domain", "Folds", "Stereonets",
                    "Thrust spacing", "Thrust formation order", "Inputs and provenance"):
        assert f"<h2>{heading}</h2>" in page
    assert page.count(CAUTION) == 2  # top and bottom
    assert parsed.tags.count("img") == 2 and page.count('src="data:image/png;base64,') == 2
    md = out["markdown"].read_text(encoding="utf-8")
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in md and "<script>" not in md
    assert md.count(CAUTION) == 2
    assert "## Thrust spacing" in md


def test_markdown_tables_keep_their_shape(tmp_path):
    md = _full(tmp_path)["markdown"].read_text(encoding="utf-8")
    for block in md.split("\n\n"):
        lines = block.splitlines()
        if lines and lines[0].startswith("| "):
            widths = {len(re.split(r"(?<!\\)\|", ln)) for ln in lines}
            assert len(widths) == 1, block


def test_spacing_shows_the_thrust_analysis_statistics(tmp_path):
    md = write_report(tmp_path / "r.html", spacing=SPACING)["markdown"].read_text(encoding="utf-8")
    overall, pairs = md.split("Per pair of successive thrusts")
    # the overall row over all five segments, then one row per pair; nothing recomputed
    assert f"| all | 5 | {PAIRS['length_m'].mean():,.0f} |" in overall  # reference: numpy mean
    assert "| T1-T2 | T1 | T2 | 2 | 2,050 |" in pairs and "T1-T2" not in overall
    raw = write_report(tmp_path / "x.html", spacing=PAIRS)["markdown"].read_text(encoding="utf-8")
    assert "| T3 | T4 | 3,100 |" in raw  # any other table is shown as given


def test_validation_summary_counts(tmp_path):
    bad = pd.concat([rejected(), rejected().iloc[[0]]], ignore_index=True)
    md = write_report(tmp_path / "r.html", attitudes=attitudes(), rejected=bad)["markdown"] \
        .read_text(encoding="utf-8")
    assert "| accepted rows | 8 |" in md and "| rejected rows | 3 |" in md
    assert "| dip\\_out\\_of\\_range | 2 |" in md and "| unparsable\\_attitude | 1 |" in md
    assert "| dip\\_zero | 1 |" in md  # the flat bed's flag


def test_formation_order_sorted_oldest_first(tmp_path):
    md = write_report(tmp_path / "r.html", formation_order=thrust_traces(),
                      relations=RELATIONS)["markdown"].read_text(encoding="utf-8")
    rows = [ln for ln in md.splitlines() if ln.startswith("| T")]
    assert [r.split(" | ")[0] for r in rows[:3]] == ["| T1", "| T3", "| T2"]
    assert "T2 cuts &lt;T3&gt; sheet" in md
    order = md.split("## Thrust formation order")[1].split("Evidence:")[0]
    assert "out\\_of\\_sequence" in order and "hw\\_dip\\_direction" not in order


def test_every_section_is_optional(tmp_path):
    out = write_report(tmp_path / "empty.html")
    page = out["html"].read_text(encoding="utf-8")
    assert "<h2>" not in page and CAUTION in page
    only = write_report(tmp_path / "prov.html", provenance=make_provenance())
    text = only["html"].read_text(encoding="utf-8")
    assert "<h2>Inputs and provenance</h2>" in text and "Validation summary" not in text


def test_figures_written_beside_the_markdown(tmp_path):
    out = _full(tmp_path)
    md = out["markdown"].read_text(encoding="utf-8")
    assert "![stereonet D1](report_figures/D1.png)" in md
    assert "(report_figures/D2_all_poles.png)" in md
    written = out["figure:D2_all_poles.png"]
    assert written.parent.name == "report_figures" and written.read_bytes()[:4] == b"\x89PNG"
    with Image.open(out["figure:D1.png"]) as img:
        assert img.size == (500, 500)  # smaller than the report width: kept as drawn
    png = (tmp_path / "stereonet_D1.png").read_bytes()
    docs = report_documents(figures={"a b": png, "a_b": png}, figures_folder="figs")
    assert sorted(docs.figures) == ["a_b.png", "a_b2.png"]  # names that slug alike stay apart
    assert "(figs/a_b2.png)" in docs.markdown


def test_refuses_to_overwrite_either_twin(tmp_path):
    (tmp_path / "r.md").write_text("keep", encoding="utf-8")
    with pytest.raises(OutputExistsError, match="r.md"):
        write_report(tmp_path / "r.html", spacing=SPACING)
    assert not (tmp_path / "r.html").exists()
    assert (tmp_path / "r.md").read_text(encoding="utf-8") == "keep"
    write_report(tmp_path / "r.html", spacing=SPACING, overwrite=True)
    assert "Thrust spacing" in (tmp_path / "r.md").read_text(encoding="utf-8")
