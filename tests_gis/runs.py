"""One tool run two ways: through the GIS's processing framework, and as the command line runs it.

The reference run goes through ``thrustmap.tools.runner`` exactly as
``thrustmap <tool>`` does (read the sources, reproject to ``crs`` when given,
``Tool.run``, sort the outputs); the GIS run writes every layer output to a
GeoPackage and every file output to a folder, read back with pyogrio.
"""

import re
from pathlib import Path

from gisdata import assert_frames_match, read_layer

from thrustmap.tools.declare import FileOutput
from thrustmap.tools.runner import collect_outputs, load_inputs


def run_in_gis(tool, sources, params, out_dir):
    """``sources``: input name -> (GeoPackage, layer). Returns output name -> frame or path."""
    import processing

    args = {name: f"{path}|layername={layer}" for name, (path, layer) in sources.items()}
    args.update(params)
    out_dir.mkdir(parents=True, exist_ok=True)
    targets = {}
    for output in tool.outputs:
        if isinstance(output, FileOutput):
            name = (
                output.name if output.is_folder else f"{output.name}{Path(output.filename).suffix}"
            )
            targets[output.name] = out_dir / name
        else:
            targets[output.name] = out_dir / f"{output.name}.gpkg"
    args.update({f"out_{name}": str(path) for name, path in targets.items()})
    result = processing.run(f"thrustmap:{tool.name}", args)
    assert set(result) == {f"out_{name}" for name in targets}
    got = {}
    for output in tool.outputs:
        path = targets[output.name]
        if isinstance(output, FileOutput):
            got[output.name] = path
        else:
            got[output.name] = read_layer(path, table=output.geometry == "table")
    return got


def run_in_python(tool, sources, params):
    """The command line's way; returns (layers by output name, files by relative path)."""
    frames = load_inputs(
        tool,
        {name: f"{path}:{layer}" for name, (path, layer) in sources.items()},
        to_crs=params.get("crs"),
    )
    declared = {p.name for p in tool.params}
    results = tool.run(frames, {k: v for k, v in params.items() if k in declared})
    return collect_outputs(tool, results, names={o.name: _relative(o) for o in tool.outputs})


def _relative(output):
    if isinstance(output, FileOutput):
        return f"{output.name}/" if output.is_folder else output.name
    return output.name


def unstable_files(first, second):
    """Names of the text or bytes outputs that differ between two plain runs of one tool."""
    return {
        name
        for name, content in first[1].items()
        if isinstance(content, str | bytes) and content != second[1].get(name)
    }


def _unstamped(text):
    return re.sub(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ", "<time>", text)


def assert_outputs_match(tool, got, expected, *, unstable=()):
    """Layers equal; files written with the same content (text, bytes) or non-empty (figures).

    Outputs named in ``unstable`` (which differ between two plain runs, such as
    web pages with random element ids) only have to start the same way.
    """
    layers, files = expected
    for output in tool.outputs:
        what = f"{tool.name}/{output.name}"
        if not isinstance(output, FileOutput):
            assert_frames_match(got[output.name], layers[output.name], what=what)
        elif output.is_folder:
            prefix = f"{output.name}/"
            names = {k[len(prefix) :] for k in files if k.startswith(prefix)}
            written = {
                p.relative_to(got[output.name]).as_posix()
                for p in got[output.name].rglob("*")
                if p.is_file()
            }
            assert written == names, f"{what}: {sorted(written)} != {sorted(names)}"
            assert all((got[output.name] / n).stat().st_size > 0 for n in names), what
        else:
            content = files[output.name]
            if output.name in unstable:
                written = got[output.name].read_bytes()
                expected_start = content.encode() if isinstance(content, str) else content
                assert written[:64] == expected_start[:64], what
            elif isinstance(content, str):
                # Run times (ISO 8601 UTC stamps) differ between any two runs.
                assert _unstamped(got[output.name].read_text(encoding="utf-8")) == _unstamped(
                    content
                ), what
            elif isinstance(content, bytes):
                assert got[output.name].read_bytes() == content, what
            else:
                assert got[output.name].stat().st_size > 0, what
