"""The walkthrough notebook runs top to bottom without an error."""

import json
import sys
from pathlib import Path

import nbformat
from nbclient import NotebookClient

NOTEBOOK = Path(__file__).resolve().parents[1] / "notebooks" / "walkthrough.ipynb"


def test_walkthrough_executes(tmp_path, monkeypatch):
    # A kernel spec of this very interpreter, so the notebook imports the thrustmap under test
    # whatever kernels the machine has installed.
    spec = tmp_path / "kernels" / "thrustmap-tests"
    spec.mkdir(parents=True)
    argv = [sys.executable, "-m", "ipykernel_launcher", "-f", "{connection_file}"]
    (spec / "kernel.json").write_text(
        json.dumps({"argv": argv, "display_name": "thrustmap tests", "language": "python"})
    )
    monkeypatch.setenv("JUPYTER_PATH", str(tmp_path))
    notebook = nbformat.read(NOTEBOOK, as_version=4)
    assert all(not cell.get("outputs") for cell in notebook.cells if cell.cell_type == "code"), (
        "commit the notebook without outputs"
    )
    client = NotebookClient(
        notebook,
        timeout=300,
        kernel_name="thrustmap-tests",
        resources={"metadata": {"path": str(NOTEBOOK.parent)}},
    )
    client.execute()  # raises CellExecutionError naming the failing cell
    assert sum(cell.cell_type == "code" for cell in notebook.cells) >= 6
