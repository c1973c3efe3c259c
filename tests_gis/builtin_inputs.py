"""Inputs for thrustmap's built-in tools: the synthetic scenario's layers, by declared input name.

Every built-in tool runs on the scenario of ``thrustmap.synth.write_scenario``.
A declared input takes the layer of the same name, else the scenario layer
listed for its name or its geometry below; a required input that matches
nothing fails the test with a message saying to extend these tables.
"""

from pathlib import Path

import pandas as pd
import pyogrio

# Declared input name -> layer of the inputs GeoPackage (the run-output names of CONTRACT.md).
LAYER_BY_NAME = {
    "attitudes": "attitudes",
    "stations": "stations",
    "thrust_traces": "thrust_traces",
    "traces": "thrust_traces",
    "thrusts": "thrust_traces",
    "fold_traces": "fold_traces",
    "folds": "fold_traces",
    "domains": "domains",
    "study_area": "study_area",
    "area": "study_area",
    "age_constraints": "age_constraints",
    "constraints": "age_constraints",
}
# Fallback for a required input whose name is not above.
LAYER_BY_GEOMETRY = {
    "point": "attitudes",
    "any": "attitudes",
    "line": "thrust_traces",
    "polygon": "domains",
    "table": "age_constraints",
}


def write_builtin_inputs(folder: Path) -> Path:
    """Write the scenario, then one GeoPackage with its layers, ``attitudes`` and ``age_constraints``."""
    from thrustmap.synth import write_scenario

    import thrustmap

    scenario = folder / "sample_gis"
    write_scenario(scenario)
    source = scenario / "scenario.gpkg"
    out = folder / "builtin_inputs.gpkg"
    for layer in pyogrio.list_layers(source)[:, 0]:
        frame = pyogrio.read_dataframe(source, layer=layer)
        pyogrio.write_dataframe(frame, out, layer=layer, append=out.exists())
    attitudes = thrustmap.read_attitudes(source, layer="stations").accepted
    pyogrio.write_dataframe(attitudes, out, layer="attitudes", append=True)
    ages = pd.read_csv(scenario / "age_constraints.csv")
    pyogrio.write_dataframe(ages, out, layer="age_constraints", append=True)
    return out


def layers_for(tool, available):
    """Map each declared input of ``tool`` to a layer name in ``available`` (optional ones may be left out).

    Raises
    ------
    LookupError
        For a required input that matches no layer.
    """
    chosen = {}
    for layer in tool.inputs:
        if layer.name in available:
            chosen[layer.name] = layer.name
            continue
        by_name = LAYER_BY_NAME.get(layer.name)
        if by_name in available:
            chosen[layer.name] = by_name
        elif not layer.optional and LAYER_BY_GEOMETRY.get(layer.geometry) in available:
            chosen[layer.name] = LAYER_BY_GEOMETRY[layer.geometry]
        elif not layer.optional:
            raise LookupError(
                f"tool {tool.name}: no scenario layer for input {layer.name!r} ({layer.geometry}); "
                "add it to LAYER_BY_NAME in tests_gis/builtin_inputs.py"
            )
    return chosen
