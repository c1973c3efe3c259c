"""Tool declarations: parameter validation, geometry checks, outputs, descriptions, shared options."""

import json

import geopandas as gpd
import pandas as pd
import pytest
import shapely

from thrustmap.errors import InputError, ParameterError
from thrustmap.tools import registry
from thrustmap.tools.declare import Example, FileOutput, LayerInput, LayerOutput, Param, Tool
from thrustmap.tools.options import AZIMUTH_REF, COMMON_OPTIONS, check_common_params, common_option

DIP = Param("dip", "float", default=30.0, unit="degrees", minimum=0.0, maximum=90.0)
COUNT = Param("count", "int", default=3, minimum=1)
FLAG = Param("flag", "bool", default=False)
KIND = Param("kind", "choice", default="plane", choices=("plane", "line"))


@pytest.mark.parametrize(
    ("param", "value", "expected"),
    [
        (DIP, "45", 45.0),
        (DIP, 0, 0.0),  # inclusive bounds
        (DIP, 90, 90.0),
        (COUNT, "7", 7),
        (COUNT, 2.0, 2),
        (FLAG, "yes", True),
        (FLAG, "0", False),
        (FLAG, True, True),
        (KIND, "line", "line"),
        (DIP, None, None),
    ],
)
def test_param_accepts_and_converts(param, value, expected):
    assert param.validate(value) == expected


@pytest.mark.parametrize(
    ("param", "value", "message"),
    [
        (DIP, 90.5, r"t: parameter 'dip' = 90.5 degrees is above the maximum 90.0 degrees"),
        (DIP, -1, r"parameter 'dip' = -1.0 degrees is below the minimum 0.0 degrees"),
        (DIP, "steep", r"parameter 'dip' must be of type float; got 'steep'"),
        (COUNT, 2.5, r"parameter 'count' must be of type int; got 2.5"),
        (COUNT, "2.5", r"parameter 'count' must be of type int"),
        (COUNT, 0, r"below the minimum 1"),
        (FLAG, "perhaps", r"parameter 'flag' must be of type bool"),
        (KIND, "fold", r"parameter 'kind' = 'fold' is not one of: plane, line"),
    ],
)
def test_param_rejects_with_a_message_naming_it(param, value, message):
    with pytest.raises(ParameterError, match=message):
        param.validate(value, tool="t")


def test_param_declaration_errors():
    with pytest.raises(ValueError, match="type 'double'"):
        Param("x", "double")
    with pytest.raises(ValueError, match="needs choices"):
        Param("x", "choice")


POINT = shapely.Point(0, 0)
LINE = shapely.LineString([(0, 0), (1, 1)])
POLYGON = shapely.box(0, 0, 1, 1)


@pytest.mark.parametrize(
    ("geometry", "shapes", "ok"),
    [
        ("point", [POINT, shapely.MultiPoint([(0, 0), (1, 1)])], True),
        ("point", [POINT, None], True),  # missing geometries are the reader's business
        ("point", [POINT, LINE], False),
        ("line", [LINE, shapely.MultiLineString([[(0, 0), (1, 0)]])], True),
        ("line", [POLYGON], False),
        ("polygon", [POLYGON, shapely.MultiPolygon([POLYGON])], True),
        ("polygon", [POINT], False),
        ("any", [POINT, LINE, POLYGON], True),
        ("table", [POINT], True),
        ("point", [], True),  # empty layer
    ],
)
def test_layer_input_geometry_check(geometry, shapes, ok):
    frame = gpd.GeoDataFrame({"n": range(len(shapes))}, geometry=gpd.GeoSeries(shapes))
    declared = LayerInput("features", geometry)
    if ok:
        declared.check(frame)
    else:
        with pytest.raises(
            InputError, match=r"file f.gpkg, layer L, row \d+: input 'features' expects"
        ):
            declared.check(frame, source="f.gpkg", layer="L")


def test_layer_input_table_for_a_spatial_input_is_rejected():
    with pytest.raises(InputError, match="expects a polygon layer; found a table without geometry"):
        LayerInput("domains", "polygon").check(pd.DataFrame({"a": [1]}))
    LayerInput("rows", "table").check(pd.DataFrame({"a": [1]}))


def test_file_output_stays_in_the_output_folder():
    assert FileOutput("maps", "figures/").is_folder
    assert not FileOutput("map", "map.html").is_folder
    for bad in ("/tmp/x.html", "../x.html", "figures/../../x.png"):
        with pytest.raises(ValueError, match="must stay inside the output folder"):
            FileOutput("x", bad)


def _double(table, *, factor):
    return {"doubled": table.assign(v=table["v"] * factor)}


DOUBLE = Tool(
    "double",
    "Multiply a column.",
    _double,
    inputs=(LayerInput("table", "table"),),
    params=(Param("factor", "float", default=2.0),),
    outputs=(LayerOutput("doubled", "table"),),
    example=Example(lambda folder: {"table": pd.DataFrame({"v": [1.0]})}, {"factor": 3}),
)


def test_tool_run_validates_and_calls():
    out = DOUBLE.run({"table": pd.DataFrame({"v": [1.5]})}, {"factor": "4"})
    assert out["doubled"]["v"].tolist() == [6.0]
    with pytest.raises(
        ParameterError, match=r"double: unknown parameter 'factr'; parameters are: factor"
    ):
        DOUBLE.run({"table": pd.DataFrame({"v": [1.0]})}, {"factr": 1})
    with pytest.raises(ParameterError, match=r"double: unknown input 'tabel'; inputs are: table"):
        DOUBLE.run({"tabel": pd.DataFrame()})
    with pytest.raises(ParameterError, match=r"required input 'table' is missing"):
        DOUBLE.run({})
    broken = Tool(
        "broken", "returns nothing", lambda table: {}, inputs=DOUBLE.inputs, outputs=DOUBLE.outputs
    )
    with pytest.raises(ParameterError, match="the tool returned no doubled"):
        broken.run({"table": pd.DataFrame()})


def test_tool_input_and_param_lookup():
    assert DOUBLE.input("table").geometry == "table"
    assert DOUBLE.param("factor").default == 2.0
    with pytest.raises(ParameterError, match="inputs are: table"):
        DOUBLE.input("layer")


@pytest.mark.parametrize("tool", [DOUBLE, *registry.list_tools()], ids=lambda t: t.name)
def test_descriptions_are_json(tool):
    doc = json.loads(json.dumps(tool.describe()))
    assert doc["name"] == tool.name
    assert [o["name"] for o in doc["outputs"]] == [o.name for o in tool.outputs]
    assert all(o["kind"] in ("layer", "file", "folder") for o in doc["outputs"])
    assert doc["example"] is not None


def test_shared_options_have_one_declaration_each():
    names = [o.name for o in COMMON_OPTIONS]
    assert len(names) == len(set(names))
    assert {"crs", "layer", "azimuth_ref", "out", "overwrite", "quiet", "verbose"} <= set(names)
    assert common_option("azimuth_ref").param is AZIMUTH_REF
    assert common_option("quiet").short == "-q"
    with pytest.raises(KeyError, match="shared options are: crs"):
        common_option("north")


def test_a_tool_may_reuse_a_shared_option_with_its_own_default():
    from dataclasses import replace

    tool = Tool("t", "t", dict, params=(replace(AZIMUTH_REF, default="magnetic"),))
    assert check_common_params(tool) == []
    wrong = Tool("t", "t", dict, params=(Param("declination", "str"),))
    assert check_common_params(wrong) == [
        "parameter 'declination' must be declared like the shared option --declination (type float)"
    ]


def test_every_registered_tool_declares_an_example_and_sane_params():
    for tool in registry.list_tools():
        assert tool.example is not None, f"{tool.name} declares no example"
        for p in tool.params:
            if p.default is not None:
                assert p.validate(p.default) == p.default, f"{tool.name}: bad default of {p.name}"
