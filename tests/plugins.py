"""A third-party tool package made on the fly: a real distribution with a real entry point.

``install_plugin`` writes a module and its ``.dist-info`` (METADATA and
entry_points.txt, as pip would) into a folder that the caller puts on
``sys.path``; importlib.metadata then finds the entry points exactly as for an
installed package.
"""

from pathlib import Path

PLUGIN_MODULE = "thrustmap_testplugin"
PLUGIN_DIST = "thrustmap-testplugin"

_SOURCE = '''
"""Tools of a third-party package, for the tests."""

import geopandas as gpd
import pandas as pd
import shapely

from thrustmap.tools import Example, FileOutput, LayerInput, LayerOutput, Param, Tool
from thrustmap.tools.options import AZIMUTH_REF, CRS


def count_rows(features, extra, domains, *, multiplier, fail, azimuth_ref, crs, domain_field):
    if fail:
        raise RuntimeError("the test plugin was asked to fail")
    table = pd.DataFrame(
        {
            "rows": [len(features) * multiplier],
            "azimuth_ref": [azimuth_ref],
            "crs": [crs or ""],
            "source": [features.attrs.get("source") or ""],
            "extra_rows": [-1 if extra is None else len(extra)],
            "domains": [-1 if domains is None else len(domains)],
            "domain_field": [domain_field or ""],
        }
    )
    return {
        "row_count": table,
        "summary": f"{len(features)} rows\\n",
        "notes": {"a.txt": "first\\n", "b.bin": b"\\x00\\x01"},
    }


def _example(folder):
    points = gpd.GeoDataFrame(
        {"name": ["a", "b", "c"]},
        geometry=shapely.points([[700000, 5080000], [701000, 5081000], [702000, 5082000]]),
        crs="EPSG:32633",
    )
    return {"features": points}


COUNT_ROWS = Tool(
    name="count-rows",
    summary="Count the rows of a point layer (test plugin).",
    func=count_rows,
    inputs=(
        LayerInput("features", "point", help="Any point layer."),
        LayerInput("extra", "any", help="Anything.", optional=True),
        LayerInput("domains", "polygon", help="Domain polygons.", optional=True),
    ),
    params=(
        Param("multiplier", "int", default=1, help="Factor.", minimum=1, maximum=10),
        Param("fail", "bool", default=False, help="Fail on purpose."),
        AZIMUTH_REF,
        CRS,
        Param("domain_field", "str", help="Domain name column."),
    ),
    outputs=(
        LayerOutput("row_count", "table", help="One row."),
        FileOutput("summary", "summary.txt", help="Text summary."),
        FileOutput("notes", "notes/", help="A folder of notes."),
    ),
    group="testing",
    example=Example(_example, {"multiplier": 2}, "Three points."),
)

TOOLS = [COUNT_ROWS]
NOT_A_TOOL = 42
SHADOW = Tool("convert-attitudes", "shadows a built-in", dict)
RESERVED = Tool("run", "takes a command name", dict)
MISUSED = Tool(
    "misused-options", "declares run options", dict,
    params=(Param("overwrite", "bool"), Param("azimuth_ref", "choice", choices=("north",))),
)
'''

ENTRY_POINTS = {
    "counting": f"{PLUGIN_MODULE}:TOOLS",
    "missing": "thrustmap_no_such_module:TOOLS",
    "not-a-tool": f"{PLUGIN_MODULE}:NOT_A_TOOL",
    "shadow": f"{PLUGIN_MODULE}:SHADOW",
    "reserved": f"{PLUGIN_MODULE}:RESERVED",
    "misused": f"{PLUGIN_MODULE}:MISUSED",
}


def install_plugin(folder: Path, entry_points: dict[str, str] = ENTRY_POINTS) -> Path:
    """Write the plugin module and its dist-info into ``folder``; return ``folder``."""
    folder.mkdir(parents=True, exist_ok=True)
    (folder / f"{PLUGIN_MODULE}.py").write_text(_SOURCE)
    info = folder / f"{PLUGIN_MODULE}-0.1.dist-info"
    info.mkdir(exist_ok=True)
    (info / "METADATA").write_text(f"Metadata-Version: 2.1\nName: {PLUGIN_DIST}\nVersion: 0.1\n")
    lines = ["[thrustmap.tools]"] + [f"{k} = {v}" for k, v in entry_points.items()]
    (info / "entry_points.txt").write_text("\n".join(lines) + "\n")
    return folder
