"""A graphical model (QgsProcessingModelAlgorithm) chaining two thrustmap algorithms."""

import pytest
from gisdata import assert_frames_match, read_layer, write_inputs
from models import CHILD_OUTPUT, expected_domain_means, ticks_then_domain_means


@pytest.fixture(scope="module")
def gpkg(tmp_path_factory):
    return write_inputs(tmp_path_factory.mktemp("model_inputs") / "inputs.gpkg")


def test_saved_model_validates_and_runs(qgis_app, gpkg, tmp_path):
    import processing
    from qgis.core import QgsProcessingModelAlgorithm

    path = tmp_path / "ticks_then_domain_means.model3"
    assert ticks_then_domain_means().toFile(str(path))
    model = QgsProcessingModelAlgorithm()
    assert model.fromFile(str(path))
    ok, issues = model.validate()
    assert ok, issues
    assert [d.name() for d in model.destinationParameterDefinitions()] == [CHILD_OUTPUT]
    out = tmp_path / "domain_means.gpkg"
    processing.run(
        model,
        {
            "stations": f"{gpkg}|layername=stations",
            "domains": f"{gpkg}|layername=domains",
            CHILD_OUTPUT: str(out),
        },
    )
    got = read_layer(out)
    expected = expected_domain_means(read_layer(gpkg, "stations"), read_layer(gpkg, "domains"))
    assert_frames_match(got, expected, what="model")
    assert got["n"].tolist() == [6, 5, 1]  # the ticks start at the stations: same domains


def test_model_missing_a_link_does_not_validate(qgis_app):
    model = ticks_then_domain_means(linked=False)
    ok, issues = model.validate()
    assert not ok
    assert any("attitudes" in issue.lower() for issue in issues), issues
