import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import pytest  # noqa: E402


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    plt.close("all")


@pytest.fixture
def plugin(tmp_path, monkeypatch):
    """The test plugin installed on sys.path for one test; the registry sees it."""
    import sys

    from tests.plugins import PLUGIN_MODULE, install_plugin
    from thrustmap.tools import registry

    folder = install_plugin(tmp_path / "site")
    monkeypatch.syspath_prepend(str(folder))
    registry.refresh()
    yield folder
    monkeypatch.undo()
    sys.modules.pop(PLUGIN_MODULE, None)
    registry.refresh()
