"""Stereonet figures: rendered headless (Agg), written atomically as PNG and SVG."""

import numpy as np
import pandas as pd
import pytest
from matplotlib.image import imread

from tests.synthetic_folds import synthetic_fold
from thrustmap import stereonet
from thrustmap.errors import OutputExistsError, ParameterError
from thrustmap.folds import fit_fold


def rows(dd=(), dip=(), lines=(), feature="bedding"):
    planes = pd.DataFrame(
        {
            "feature": feature,
            "kind": "plane",
            "dip_direction": list(dd),
            "dip": list(dip),
            "trend": np.nan,
            "plunge": np.nan,
        }
    )
    lin = pd.DataFrame(
        {
            "feature": [f for f, _, _ in lines],
            "kind": "line",
            "dip_direction": np.nan,
            "dip": np.nan,
            "trend": [t for _, t, _ in lines],
            "plunge": [p for _, _, p in lines],
        }
    )
    return pd.concat([planes, lin], ignore_index=True)


def has_density_bar(fig):
    return any("pole density" in ax.get_xlabel() for ax in fig.axes)


def legend_labels(fig):
    return [t.get_text() for t in fig.legends[0].get_texts()] if fig.legends else []


def test_full_figure_has_every_element():
    dd, dip, over, _ = synthetic_fold(3, n=60)
    fit = fit_fold(dd, dip, overturned=over, n_boot=100, hinge_trend=[10], hinge_plunge=[20])
    data = rows(dd, dip, lines=[("hinge_line", 10, 20), ("lineation", 200, 5)])
    fig = stereonet.plot_stereonet(data, fit=fit, title="Domain D1")
    labels = legend_labels(fig)
    for label in (
        "bedding poles (60)",
        "hinge line (1)",
        "lineation (1)",
        "\u03c0-girdle",
        "axial plane",
        "fold axis + 95% cone",
        "mean hinge line",
    ):
        assert label in labels
    texts = " ".join(t.get_text() for t in fig.texts)
    assert "Domain D1" in texts and f"N          {fit.n}" in texts and fit.tightness in texts
    assert has_density_bar(fig)


def test_figure_without_fold_or_density():
    fig = stereonet.plot_stereonet(rows(lines=[("lineation", 20, 10), ("lineation", 25, 12)]))
    assert legend_labels(fig) == ["lineation (2)"]
    assert not has_density_bar(fig)


def test_writes_png_and_svg_atomically(tmp_path):
    dd, dip, over, _ = synthetic_fold(4, n=40)
    fit = fit_fold(dd, dip, overturned=over, n_boot=50)
    paths = stereonet.write_stereonet(
        rows(dd, dip), tmp_path / "figures", "D 1/x", fit=fit, title="Domain D 1/x"
    )
    assert [p.name for p in paths] == ["stereonet_D_1_x.png", "stereonet_D_1_x.svg"]
    image = imread(paths[0])
    assert image.shape[0] == 1480 and image.shape[1] == 1200  # 6.0 x 7.4 in at 200 dpi
    assert image[..., :3].std() > 0.05  # not blank
    assert paths[1].read_text()[:200].lstrip().startswith("<?xml")
    assert sorted(p.name for p in (tmp_path / "figures").iterdir()) == sorted(p.name for p in paths)
    with pytest.raises(OutputExistsError, match="overwrite"):
        stereonet.write_stereonet(rows(dd, dip), tmp_path / "figures", "D 1/x")
    again = stereonet.write_stereonet(rows(dd, dip), tmp_path / "figures", "D 1/x", overwrite=True)
    assert again == paths


def test_bad_format(tmp_path):
    with pytest.raises(ParameterError, match="png, svg, pdf"):
        stereonet.write_stereonet(rows([90, 270], [30, 30]), tmp_path, "x", formats=("gif",))


def test_one_figure_pair_per_domain(tmp_path):
    from tests.test_domains import attitudes, fold_rows, two_domains
    from thrustmap.domains import domain_statistics

    data, _ = fold_rows(6, 700000, n=30)
    res = domain_statistics(attitudes(data), two_domains(), n_boot=20)
    paths = stereonet.write_domain_stereonets(res, tmp_path)
    assert [p.name for p in paths] == [
        "stereonet_D1.png",
        "stereonet_D1.svg",
        "stereonet_D2.png",
        "stereonet_D2.svg",
    ]
