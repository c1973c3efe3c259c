"""The thrustmap processing provider inside the real desktop GIS (headless).

Reference for every comparison: the same declared tool run in plain Python
(``Tool.run``) on the same GeoPackage read with pyogrio, outputs read back
with pyogrio from the GeoPackages the GIS wrote.
"""

import configparser
from pathlib import Path

import pytest
from gisdata import CRS, assert_frames_match, read_layer, write_inputs

import thrustmap
from thrustmap.errors import ParameterError
from thrustmap.tools.registry import get_tool, list_tools

PLUGIN = Path(__file__).resolve().parent.parent / "gis_plugin" / "thrustmap_provider"

# (tool, {input: layer of the test GeoPackage}, parameters): every sample tool,
# with defaults and with every parameter set, optional input given and left out.
SAMPLE_CASES = [
    ("dip_ticks", {"stations": "stations"}, {}),
    (
        "dip_ticks",
        {"stations": "stations"},
        {"length": 250.0, "azimuth_field": "strike", "centred": True, "prefix": "S-"},
    ),
    ("domain_mean_plane", {"attitudes": "stations", "domains": "domains"}, {"min_count": 2}),
    ("table_to_stations", {"table": "coords", "clip": "domains"}, {"crs": CRS}),
    ("table_to_stations", {"table": "coords"}, {}),
]

BUILTIN_TOOLS = [t for t in list_tools() if t.origin == "thrustmap"]


@pytest.fixture(scope="module")
def gpkg(tmp_path_factory):
    return write_inputs(tmp_path_factory.mktemp("gis_inputs") / "inputs.gpkg")


def _is_table(tool, name):
    return next(i for i in tool.inputs if i.name == name).geometry == "table"


def run_in_gis(tool, layers, params, gpkg, out_dir):
    """Run through the GIS's processing framework with every output written to a GeoPackage."""
    import processing

    args = {name: f"{gpkg}|layername={layer}" for name, layer in layers.items()}
    args.update(params)
    paths = {o.name: out_dir / f"{o.name}.gpkg" for o in tool.outputs}
    args.update({f"out_{name}": str(path) for name, path in paths.items()})
    result = processing.run(f"thrustmap:{tool.name}", args)
    assert set(result) >= {f"out_{name}" for name in paths}
    return {o.name: read_layer(paths[o.name], table=o.geometry == "table") for o in tool.outputs}


def run_in_python(tool, layers, params, gpkg):
    inputs = {
        name: read_layer(gpkg, layer, table=_is_table(tool, name)) for name, layer in layers.items()
    }
    return tool.run(inputs, params)


def test_every_tool_is_an_algorithm(provider):
    tools = list_tools()
    assert provider is not None
    assert provider.name() == "thrustmap"
    assert provider.longName() == f"thrustmap {thrustmap.__version__}"
    assert sorted(a.name() for a in provider.algorithms()) == sorted(t.name for t in tools)
    names = {"dip_ticks", "domain_mean_plane", "table_to_stations"}
    assert names <= {t.name for t in tools}, "the sample tool package was not discovered"
    assert {t.origin for t in tools if t.name in names} == {"thrustmap-gis-sample-tools"}


def test_every_tool_has_a_run_case():
    covered = {case[0] for case in SAMPLE_CASES} | {t.name for t in BUILTIN_TOOLS}
    assert {t.name for t in list_tools()} <= covered


@pytest.mark.parametrize("tool", list_tools(), ids=lambda t: t.name)
def test_dialog_follows_the_declaration(qgis_app, tool):
    from qgis.core import (
        QgsApplication,
        QgsProcessing,
        QgsProcessingParameterBoolean,
        QgsProcessingParameterDefinition,
        QgsProcessingParameterEnum,
        QgsProcessingParameterFeatureSink,
        QgsProcessingParameterFeatureSource,
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
    }
    for p in tool.params:
        d = alg.parameterDefinition(p.name)
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
            assert d.defaultValue() == p.default
            if p.minimum is not None:
                assert d.minimum() == p.minimum
            if p.maximum is not None:
                assert d.maximum() == p.maximum
        elif p.type == "choice":
            assert d.options() == list(p.choices)
            assert d.usesStaticStrings()
            assert d.defaultValue() == p.default
        else:
            assert d.defaultValue() == p.default
    for output in tool.outputs:
        d = alg.parameterDefinition(f"out_{output.name}")
        assert isinstance(d, QgsProcessingParameterFeatureSink)
        assert d.dataType() == layer_types[output.geometry]


@pytest.mark.parametrize(
    ("name", "layers", "params"),
    SAMPLE_CASES,
    ids=[f"{c[0]}-{i}" for i, c in enumerate(SAMPLE_CASES)],
)
def test_sample_tool_matches_python(qgis_app, gpkg, tmp_path, name, layers, params):
    tool = get_tool(name)
    got = run_in_gis(tool, layers, params, gpkg, tmp_path)
    expected = run_in_python(tool, layers, params, gpkg)
    for output in tool.outputs:
        assert_frames_match(got[output.name], expected[output.name], what=f"{name}/{output.name}")


def test_sample_outputs_are_not_trivial(qgis_app, gpkg, tmp_path):
    """Guards the comparisons above: the runs produce rows, real values and real geometry."""
    ticks = run_in_gis(
        get_tool("dip_ticks"), {"stations": "stations"}, {"length": 250.0}, gpkg, tmp_path
    )
    assert len(ticks["ticks"]) == 13
    assert ticks["ticks"].length.round(6).eq(250.0).all()
    assert ticks["tick_summary"]["n_ticks"].tolist() == [13]
    means = run_in_gis(
        get_tool("domain_mean_plane"),
        {"attitudes": "stations", "domains": "domains"},
        {"min_count": 2},
        gpkg,
        tmp_path,
    )["domain_means"]
    assert means["n"].tolist() == [6, 5, 1]
    assert means["mean_dip"].isna().tolist() == [False, False, True]
    flagged = run_in_gis(
        get_tool("table_to_stations"), {"table": "coords", "clip": "domains"}, {}, gpkg, tmp_path
    )["stations"]
    assert flagged["inside"].tolist() == [True, True, False, True]


@pytest.mark.parametrize("tool", BUILTIN_TOOLS, ids=lambda t: t.name)
def test_builtin_tool_matches_python(qgis_app, tmp_path_factory, tmp_path, tool):
    import pyogrio
    from builtin_inputs import layers_for, write_builtin_inputs

    folder = tmp_path_factory.getbasetemp() / "builtin_inputs"
    if not (folder / "builtin_inputs.gpkg").exists():
        folder.mkdir(exist_ok=True)
        write_builtin_inputs(folder)
    source = folder / "builtin_inputs.gpkg"
    layers = layers_for(tool, set(pyogrio.list_layers(source)[:, 0]))
    got = run_in_gis(tool, layers, {}, source, tmp_path)
    expected = run_in_python(tool, layers, {}, source)
    for output in tool.outputs:
        assert_frames_match(
            got[output.name], expected[output.name], what=f"{tool.name}/{output.name}"
        )


@pytest.mark.parametrize(
    ("name", "param", "value"),
    [
        ("dip_ticks", "length", 0.5),  # below the declared minimum of 1 m
        ("dip_ticks", "length", 5000.5),  # above the declared maximum of 5000 m
        ("domain_mean_plane", "min_count", 0),
        ("dip_ticks", "azimuth_field", "trend"),  # not among the choices
    ],
)
def test_out_of_range_is_refused_by_the_gis(qgis_app, gpkg, tmp_path, name, param, value):
    import processing
    from qgis.core import QgsApplication, QgsProcessingContext, QgsProcessingException

    tool = get_tool(name)
    layers = {"dip_ticks": {"stations": "stations"}}.get(
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
        ({"crs": "no such crs"}, "parameter 'crs' = 'no such crs' is not a CRS"),
    ],
)
def test_thrustmap_errors_reach_the_gis(qgis_app, gpkg, tmp_path, params, message):
    import processing
    from qgis.core import QgsProcessingException

    args = {"table": f"{gpkg}|layername=coords", "out_stations": str(tmp_path / "s.gpkg"), **params}
    with pytest.raises(QgsProcessingException, match=message):
        processing.run("thrustmap:table_to_stations", args)


def test_plugin_metadata():
    meta = configparser.ConfigParser()
    meta.read(PLUGIN / "metadata.txt")
    general = meta["general"]
    assert general["hasProcessingProvider"] == "yes"
    assert general["version"] == thrustmap.__version__
    assert general["qgisMinimumVersion"] == "3.22"
