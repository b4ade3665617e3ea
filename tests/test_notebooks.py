"""Every dashboard notebook executes without error (nbclient), and the
repository's notebooks are the ones ``ekexplore serve`` would write."""
from __future__ import annotations

import json
from pathlib import Path

import pytest

nbformat = pytest.importorskip("nbformat")
nbclient = pytest.importorskip("nbclient")
pytest.importorskip("ipykernel")

from ekexplore.dashboards.notebooks import NOTEBOOKS, notebook_json  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
NOTEBOOK_PATHS = sorted((ROOT / "dashboards").glob("*.ipynb"))

# Appended to each notebook: reads what the view shows, from the same kernel.
CHECK = """
from ekexplore.dashboards import shared_state
import ipywidgets as _w
_st = shared_state()
_all = getattr(_w.widgets.widget, "_instances", None) or _w.Widget.widgets
_html = [c.value for c in list(_all.values()) if isinstance(c, _w.HTML)]
print("STATUS-OK", sum("ekx-status ekx-ok" in h for h in _html))
print("STATUS-ERRORS", sum("ekx-status ekx-error" in h for h in _html))
print("STATE", _st.concentration, _st.size)
"""


def test_repository_notebooks_match_the_package():
    assert {p.stem for p in NOTEBOOK_PATHS} == set(NOTEBOOKS)
    for p in NOTEBOOK_PATHS:
        nb = json.loads(p.read_text(encoding="utf-8"))
        assert nb == notebook_json(NOTEBOOKS[p.stem]), f"{p.name} differs; rewrite it with " \
            "ekexplore.dashboards.notebooks.write_notebooks('dashboards')"


@pytest.mark.parametrize("path", NOTEBOOK_PATHS, ids=lambda p: p.name)
def test_notebook_executes(path):
    nb = nbformat.read(path, as_version=4)
    nb.cells.append(nbformat.v4.new_code_cell(CHECK))
    client = nbclient.NotebookClient(nb, timeout=180, kernel_name="python3",
                                     resources={"metadata": {"path": str(path.parent)}})
    client.execute()
    outputs = nb.cells[0].outputs
    assert not [o for o in outputs if o.output_type == "error"]
    # the last output of the dashboard cell is the widget
    kinds = [o.get("data", {}).keys() for o in outputs]
    assert any("application/vnd.jupyter.widget-view+json" in k for k in kinds)
    text = "".join(o.get("text", "") for o in nb.cells[-1].outputs)
    assert "STATUS-ERRORS 0" in text and "STATUS-OK 1" in text
