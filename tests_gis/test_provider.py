"""The thrustmap processing provider inside the real desktop GIS (headless).

Reference for every comparison: the same declared tool run the way the
command line runs it, on the same GeoPackage (see ``runs.py``).
"""

import configparser
from pathlib import Path

import pytest
from gisdata import CRS, write_inputs
from runs import assert_outputs_match, run_in_gis, run_in_python

import thrustmap
from thrustmap.errors import ParameterError
from thrustmap.tools.declare import FileOutput
from thrustmap.tools.registry import get_tool, list_broken, list_tools

PLUGIN = Path(__file__).resolve().parent.parent / "gis_plugin" / "thrustmap_provider"
SAMPLE_ORIGIN = "thrustmap-gis-sample-tools"

# (tool, {input: layer of the test GeoPackage}, parameters): every sample tool,
# with defaults and with every parameter set, optional input given and left out.
SAMPLE_CASES = [
    ("dip-ticks", {"stations": "stations"}, {}),
    (
        "dip-ticks",
        {"stations": "stations"},
        {"length": 250.0, "azimuth_field": "strike", "centred": True, "prefix": "S-"},
    ),
    ("domain-mean-plane", {"attitudes": "stations", "domains": "domains"}, {"min_count": 2}),
    ("table-to-stations", {"table": "coords", "clip": "domains"}, {"crs": CRS}),
    ("table-to-stations", {"table": "coords"}, {}),
]


@pytest.fixture(scope="module")
def gpkg(tmp_path_factory):
    return write_inputs(tmp_path_factory.mktemp("gis_inputs") / "inputs.gpkg")


def _sources(gpkg, layers):
    return {name: (gpkg, layer) for name, layer in layers.items()}


def test_every_tool_is_an_algorithm(provider):
    tools = list_tools()
    assert provider is not None
    assert provider.name() == "thrustmap"
    assert provider.longName() == f"thrustmap {thrustmap.__version__}"
    assert sorted(a.name() for a in provider.algorithms()) == sorted(t.name for t in tools)
    names = {"dip-ticks", "domain-mean-plane", "table-to-stations"}
    assert names <= {t.name for t in tools}, "the sample tool package was not discovered"
    assert {t.origin for t in tools if t.name in names} == {SAMPLE_ORIGIN}
    assert list_broken() == []


def test_every_tool_has_a_run_case():
    covered = {case[0] for case in SAMPLE_CASES}
    covered |= {t.name for t in list_tools() if t.origin != SAMPLE_ORIGIN and t.example is not None}
    assert {t.name for t in list_tools()} <= covered


@pytest.mark.parametrize("tool", list_tools(), ids=lambda t: t.name)
def test_dialog_follows_the_declaration(qgis_app, tool):
    from qgis.core import (
        QgsApplication,
        QgsProcessing,
        QgsProcessingAlgorithm,
        QgsProcessingParameterBoolean,
        QgsProcessingParameterCrs,
        QgsProcessingParameterDefinition,
        QgsProcessingParameterEnum,
        QgsProcessingParameterFeatureSink,
        QgsProcessingParameterFeatureSource,
        QgsProcessingParameterFile,
        QgsProcessingParameterFileDestination,
        QgsProcessingParameterFolderDestination,
        QgsProcessingParameterNumber,
        QgsProcessingParameterString,
    )

    alg = QgsApplication.processingRegistry().algorithmById(f"thrustmap:{tool.name}")
    layer_types = {
        "point": QgsProcessing.TypeVectorPoint,
        "line": QgsProcessing.TypeVectorLine,
        "polygon": QgsProcessing.TypeVectorPolygon,
        "table": QgsProcessing.TypeVector,
        "any": QgsProcessing.TypeVectorAnyGeometry,
    }
    assert alg.shortDescription() == tool.summary
    for layer in tool.inputs:
        d = alg.parameterDefinition(layer.name)
        assert isinstance(d, QgsProcessingParameterFeatureSource)
        assert d.dataTypes() == [layer_types[layer.geometry]]
        assert bool(d.flags() & QgsProcessingParameterDefinition.FlagOptional) == layer.optional
        assert d.help() == layer.help
    kinds = {
        "float": QgsProcessingParameterNumber,
        "int": QgsProcessingParameterNumber,
        "bool": QgsProcessingParameterBoolean,
        "choice": QgsProcessingParameterEnum,
        "str": QgsProcessingParameterString,
        "file": QgsProcessingParameterFile,
    }
    crs = alg.parameterDefinition("crs")
    assert isinstance(crs, QgsProcessingParameterCrs)  # every algorithm, as on the command line
    assert crs.flags() & QgsProcessingParameterDefinition.FlagOptional
    for p in tool.params:
        d = alg.parameterDefinition(p.name)
        if p.name == "crs":
            assert d.help() == p.help and d.defaultValue() == p.default
            continue
        assert isinstance(d, kinds[p.type]), p.name
        assert d.help() == p.help
        if p.unit:
            assert p.unit in d.description()
        if p.type in ("float", "int"):
            number = (
                QgsProcessingParameterNumber.Double
                if p.type == "float"
                else QgsProcessingParameterNumber.Integer
            )
            assert d.dataType() == number
            if p.minimum is not None:
                assert d.minimum() == p.minimum
            if p.maximum is not None:
                assert d.maximum() == p.maximum
        elif p.type == "choice":
            assert d.options() == list(p.choices)
            assert d.usesStaticStrings()
        assert d.defaultValue() == p.default
    for output in tool.outputs:
        d = alg.parameterDefinition(f"out_{output.name}")
        if isinstance(output, FileOutput) and output.is_folder:
            assert isinstance(d, QgsProcessingParameterFolderDestination)
        elif isinstance(output, FileOutput):
            assert isinstance(d, QgsProcessingParameterFileDestination)
            assert Path(output.filename).suffix in d.fileFilter()
        else:
            assert isinstance(d, QgsProcessingParameterFeatureSink)
            assert d.dataType() == layer_types[output.geometry]
    writes_files = any(isinstance(o, FileOutput) for o in tool.outputs)
    assert bool(alg.flags() & QgsProcessingAlgorithm.FlagNoThreading) == writes_files


@pytest.mark.parametrize(
    ("name", "layers", "params"),
    SAMPLE_CASES,
    ids=[f"{c[0]}-{i}" for i, c in enumerate(SAMPLE_CASES)],
)
def test_sample_tool_matches_python(qgis_app, gpkg, tmp_path, name, layers, params):
    tool = get_tool(name)
    got = run_in_gis(tool, _sources(gpkg, layers), params, tmp_path)
    assert_outputs_match(tool, got, run_in_python(tool, _sources(gpkg, layers), params))


def test_sample_outputs_are_not_trivial(qgis_app, gpkg, tmp_path):
    """Guards the comparisons above: the runs produce rows, real values and real geometry."""
    ticks = run_in_gis(
        get_tool("dip-ticks"), _sources(gpkg, {"stations": "stations"}), {"length": 250.0}, tmp_path
    )
    assert len(ticks["ticks"]) == 13
    assert ticks["ticks"].length.round(6).eq(250.0).all()
    assert ticks["tick_summary"]["n_ticks"].tolist() == [13]
    means = run_in_gis(
        get_tool("domain-mean-plane"),
        _sources(gpkg, {"attitudes": "stations", "domains": "domains"}),
        {"min_count": 2},
        tmp_path,
    )["domain_means"]
    assert means["n"].tolist() == [6, 5, 1]
    assert means["mean_dip"].isna().tolist() == [False, False, True]
    flagged = run_in_gis(
        get_tool("table-to-stations"),
        _sources(gpkg, {"table": "coords", "clip": "domains"}),
        {},
        tmp_path,
    )["stations"]
    assert flagged["inside"].tolist() == [True, True, False, True]


def test_working_crs_reprojects_the_inputs(qgis_app, gpkg, tmp_path):
    """Stations stored in lon/lat, run in UTM: the GIS's transformation against pyproj's."""
    import pyogrio
    from gisdata import read_layer

    lonlat = tmp_path / "lonlat.gpkg"
    pyogrio.write_dataframe(
        read_layer(gpkg, "stations").to_crs("EPSG:4326"), lonlat, layer="stations"
    )
    tool = get_tool("dip-ticks")
    sources = {"stations": (lonlat, "stations")}
    got = run_in_gis(tool, sources, {"crs": CRS}, tmp_path)
    assert got["ticks"].crs == CRS
    assert_outputs_match(tool, got, run_in_python(tool, sources, {"crs": CRS}))


@pytest.mark.parametrize(
    ("crs", "message"),
    [
        ("EPSG:4326", "is not projected; distances need a projected CRS"),
        ("no such crs", "crs: 'no such crs' is not a CRS the GIS knows"),
    ],
)
def test_unusable_working_crs_is_refused(qgis_app, gpkg, tmp_path, crs, message):
    import processing
    from qgis.core import QgsProcessingException

    args = {
        "stations": f"{gpkg}|layername=stations",
        "crs": crs,
        "out_ticks": str(tmp_path / "t.gpkg"),
        "out_tick_summary": str(tmp_path / "s.gpkg"),
    }
    with pytest.raises(QgsProcessingException, match=message):
        processing.run("thrustmap:dip-ticks", args)


@pytest.mark.parametrize(
    ("name", "param", "value"),
    [
        ("dip-ticks", "length", 0.5),  # below the declared minimum of 1 m
        ("dip-ticks", "length", 5000.5),  # above the declared maximum of 5000 m
        ("domain-mean-plane", "min_count", 0),
        ("dip-ticks", "azimuth_field", "trend"),  # not among the choices
    ],
)
def test_out_of_range_is_refused_by_the_gis(qgis_app, gpkg, tmp_path, name, param, value):
    import processing
    from qgis.core import QgsApplication, QgsProcessingContext, QgsProcessingException

    tool = get_tool(name)
    layers = {"dip-ticks": {"stations": "stations"}}.get(
        name, {"attitudes": "stations", "domains": "domains"}
    )
    args = {k: f"{gpkg}|layername={v}" for k, v in layers.items()}
    args[param] = value
    args.update({f"out_{o.name}": str(tmp_path / f"{o.name}.gpkg") for o in tool.outputs})
    alg = QgsApplication.processingRegistry().algorithmById(f"thrustmap:{name}")
    ok, message = alg.checkParameterValues(args, QgsProcessingContext())
    assert not ok and param in message
    with pytest.raises(QgsProcessingException, match=f"Incorrect parameter value for {param}"):
        processing.run(f"thrustmap:{name}", args)
    assert not any((tmp_path / f"{o.name}.gpkg").exists() for o in tool.outputs)
    with pytest.raises(ParameterError, match=param):  # plain Python refuses the same value
        tool.validate_params({param: value})


@pytest.mark.parametrize(
    ("params", "message"),
    [
        ({"x_field": "east"}, "layer table, field 'east': no such column"),
        ({"y_field": "x", "x_field": "name"}, "field 'name': 4 value.s. missing or not numeric"),
    ],
)
def test_thrustmap_errors_reach_the_gis(qgis_app, gpkg, tmp_path, params, message):
    import processing
    from qgis.core import QgsProcessingException

    args = {"table": f"{gpkg}|layername=coords", "out_stations": str(tmp_path / "s.gpkg"), **params}
    with pytest.raises(QgsProcessingException, match=message):
        processing.run("thrustmap:table-to-stations", args)


def test_plugin_metadata():
    meta = configparser.ConfigParser()
    meta.read(PLUGIN / "metadata.txt")
    general = meta["general"]
    assert general["hasProcessingProvider"] == "yes"
    assert general["version"] == thrustmap.__version__
    assert general["qgisMinimumVersion"] == "3.22"
