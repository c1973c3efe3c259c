"""Tool declarations for the thrust-network analysis (a thin wrapper over ``analyze_thrusts``)."""

from __future__ import annotations

import logging
from typing import Any

import pandas as pd

from thrustmap.thrusts import LAYER_NAMES, analyze_thrusts
from thrustmap.tools._sample import sample_file, scenario
from thrustmap.tools.declare import Example, LayerInput, LayerOutput, Param, Tool

__all__ = ["TOOLS"]

log = logging.getLogger(__name__)


def _run(
    thrust_traces: Any,
    study_area: Any = None,
    attitudes: Any = None,
    age_constraints: Any = None,
    **params: Any,
) -> dict[str, pd.DataFrame]:
    result = analyze_thrusts(
        thrust_traces,
        study_area=study_area,
        attitudes=attitudes,
        age_constraints=age_constraints,
        **params,
    )
    log.info("%s", result.summary())
    return result.layers()


def _example(folder: Any) -> dict[str, str]:
    return {
        "thrust_traces": scenario("thrust_traces"),
        "study_area": scenario("study_area"),
        "age_constraints": str(sample_file("age_constraints.csv")),
    }


_OUTPUT_HELP = {
    "thrust_traces": "traces with hanging-wall side (given/inferred), rank (1 = oldest) and sequence (in/out)",
    "thrust_sheets": "polygons between successive thrusts with floor and roof thrust, area and mean width",
    "thrust_nodes": "trace ends (free tip, branch, truncation, boundary) and crossings",
    "spacing_scanlines": "scanline segments between successive thrusts with the pair and length",
    "spacing": "spacing statistics per thrust pair and overall, with bootstrap confidence interval",
    "thrust_relations": "every formed-after relation with its evidence, status and contradiction",
    "thrust_rejected": "rejected trace and constraint rows with reason codes",
}
_OUTPUT_GEOMETRY = {
    "thrust_traces": "line",
    "thrust_sheets": "polygon",
    "thrust_nodes": "point",
    "spacing_scanlines": "line",
    "spacing": "table",
    "thrust_relations": "table",
    "thrust_rejected": "table",
}

TOOLS = (
    Tool(
        name="thrusts",
        summary=(
            "Thrust network: topology, hanging walls, transport direction, thrust sheets, "
            "spacing along transport and formation order"
        ),
        func=_run,
        group="thrusts",
        inputs=(
            LayerInput(
                "thrust_traces", "line", "thrust traces with thrust_id, hw_side or hw_dip_direction"
            ),
            LayerInput(
                "study_area",
                "polygon",
                "mapped area; default the traces' bounding box",
                optional=True,
            ),
            LayerInput(
                "attitudes",
                "point",
                "attitude table: slickenlines and fault/thrust planes",
                optional=True,
            ),
            LayerInput("age_constraints", "table", "younger, older, note rows", optional=True),
        ),
        params=(
            Param(
                "transport_azimuth",
                "float",
                None,
                "transport direction toward the foreland; default from slickenlines or trace geometry",
                unit="degrees",
                minimum=0.0,
                maximum=360.0,
            ),
            # type and choices as the shared options azimuth_ref and declination
            Param(
                "azimuth_ref",
                "choice",
                default="true",
                help="North reference of transport_azimuth: true, grid (of the working CRS) or "
                "magnetic (corrected with the declination); hw_dip_direction is true north.",
                choices=("true", "grid", "magnetic"),
            ),
            Param(
                "declination",
                "float",
                help="Magnetic declination to apply to a magnetic transport_azimuth, east positive.",
                unit="degrees",
                minimum=-90.0,
                maximum=90.0,
            ),
            Param(
                "snap_tolerance",
                "float",
                10.0,
                "trace ends this close to a trace or the area boundary are snapped onto it",
                unit="metres",
                minimum=0.0,
            ),
            Param(
                "scanline_interval",
                "float",
                None,
                "distance between spacing scanlines; default 1/100 of the area's width across transport",
                unit="metres",
                minimum=0.01,
            ),
            Param(
                "branch_angle",
                "float",
                15.0,
                "largest junction angle of a branch (hanging walls on the same side); steeper contacts are truncations",
                unit="degrees",
                minimum=0.0,
                maximum=90.0,
            ),
            Param(
                "attitude_radius",
                "float",
                1000.0,
                "fault and thrust attitudes this close to a trace vote on its missing hanging-wall side",
                unit="metres",
                minimum=0.0,
            ),
            Param(
                "n_boot",
                "int",
                1000,
                "bootstrap resamples for the spacing confidence intervals",
                minimum=1,
            ),
            Param("seed", "int", 0, "seed of the bootstrap"),
        ),
        outputs=tuple(LayerOutput(n, _OUTPUT_GEOMETRY[n], _OUTPUT_HELP[n]) for n in LAYER_NAMES),
        example=Example(
            _example,
            {"scanline_interval": 500.0, "n_boot": 200},
            "the synthetic scenario's six thrusts, study area and age constraints",
        ),
    ),
)
