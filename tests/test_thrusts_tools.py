"""The thrusts tool declaration and its outputs written to a real GeoPackage by both I/O engines."""

import geopandas as gpd
import pandas as pd
import pyogrio
import pytest

from tests.thrust_networks import area, box, parallel_set
from thrustmap.errors import ParameterError
from thrustmap.thrusts import LAYER_NAMES
from thrustmap.tools.thrusts import TOOLS

# layer names fixed for the run GeoPackage: the data contract's thrust layers plus thrust_rejected
CONTRACT_LAYERS = set(
    "thrust_traces thrust_sheets thrust_nodes spacing_scanlines spacing thrust_relations "
    "thrust_rejected".split()
)


def test_declaration_matches_the_contract():
    (tool,) = TOOLS
    assert {o.name for o in tool.outputs} == CONTRACT_LAYERS == set(LAYER_NAMES)
    assert [i.name for i in tool.inputs] == [
        "thrust_traces",
        "study_area",
        "attitudes",
        "age_constraints",
    ]
    assert tool.describe()["params"][0]["unit"] == "degrees"


def test_tool_runs_and_validates_parameters():
    (tool,) = TOOLS
    out = tool.run(
        {"thrust_traces": parallel_set(3), "study_area": area(box(-500, 0, 2500, 10000))},
        {"transport_azimuth": "90", "azimuth_ref": "grid", "scanline_interval": 1000},
    )
    assert set(out) == CONTRACT_LAYERS
    assert out["thrust_traces"]["rank"].tolist() == [1, 2, 3]
    with pytest.raises(ParameterError, match="branch_angle"):
        tool.run({"thrust_traces": parallel_set(2)}, {"branch_angle": 100})


@pytest.mark.parametrize("engine", ["pyogrio", "fiona"])
def test_layers_round_trip_through_geopackage(tmp_path, engine):
    (tool,) = TOOLS
    constraints = pd.DataFrame({"younger": ["T9"], "older": ["T1"], "note": ["unknown id"]})
    out = tool.run(
        {
            "thrust_traces": parallel_set(3),
            "study_area": area(box(-500, 0, 2500, 10000)),
            "age_constraints": constraints,
        },
        {"scanline_interval": 1000},
    )
    path = tmp_path / "thrustmap.gpkg"
    for name, frame in out.items():
        if isinstance(frame, gpd.GeoDataFrame):
            frame.to_file(path, layer=name, driver="GPKG", engine=engine)
        else:  # attribute tables: geopandas writes geometry-less layers through pyogrio only
            pyogrio.write_dataframe(frame, path, layer=name, driver="GPKG")
    for name, frame in out.items():
        back = gpd.read_file(path, layer=name, engine=engine)
        assert len(back) == len(frame), name
    traces = gpd.read_file(path, layer="thrust_traces", engine=engine)
    assert traces[["thrust_id", "hw_side", "rank", "sequence"]].values.tolist() == [
        ["T1", "left", 1, "in"],
        ["T2", "left", 2, "in"],
        ["T3", "left", 3, "in"],
    ]
    rejected = gpd.read_file(path, layer="thrust_rejected", engine=engine)
    assert rejected["reason"].tolist() == ["unknown_thrust"]
