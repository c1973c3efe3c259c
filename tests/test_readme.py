"""The README's Python example runs on the bundled synthetic scenario, as printed."""

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_readme_python_example_runs(monkeypatch):
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    blocks = re.findall(r"```python\n(.*?)```", text, flags=re.S)
    assert blocks, "README.md has no Python example"
    monkeypatch.chdir(ROOT)
    namespace: dict = {}
    exec(compile(blocks[0], "README.md", "exec"), namespace)  # noqa: S102
    # The example's own results: the sample's formation order (sample_gis/truth.json,
    # our generated truth) and a fold with an axis and a cone.
    assert namespace["result"].order == ["T1", "T2", "T3", "T4", "T5", "T6"]
    assert 0 <= namespace["fold"].cone95 < 10
    att = namespace["att"]
    assert len(att.accepted) + len(att.rejected) == 475  # every row of the field sheet
