"""The Binder (repo2docker) configuration: every package it lists is
installed at a version that satisfies the listed specifier, and imports."""
from __future__ import annotations

import importlib
import importlib.metadata as md
from pathlib import Path

import pytest

packaging = pytest.importorskip("packaging")
from packaging.requirements import Requirement  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
BINDER = ROOT / "binder"


def requirements():
    lines = (BINDER / "requirements.txt").read_text().splitlines()
    return [Requirement(ln.split("#")[0].strip()) for ln in lines
            if ln.split("#")[0].strip()]


def import_names(dist_name):
    """Top-level import names of an installed distribution."""
    dist = md.distribution(dist_name)
    top = dist.read_text("top_level.txt")
    if top:
        return [t for t in top.split() if not t.startswith("_")]
    names = set()
    for f in dist.files or ():
        parts = f.parts
        if len(parts) > 1 and parts[0].isidentifier() and not parts[0].endswith(
                (".dist-info", ".data")):
            names.add(parts[0])
        elif len(parts) == 1 and f.suffix == ".py":
            names.add(f.stem)
    return sorted(n for n in names if not n.startswith("_")) or [dist_name.replace("-", "_")]


def test_binder_files_present():
    assert (BINDER / "requirements.txt").is_file()
    assert (BINDER / "runtime.txt").read_text().strip().startswith("python-3")
    post = (BINDER / "postBuild").read_text()
    assert "pip install" in post and " ." in post       # installs this repository


@pytest.mark.parametrize("req", requirements(), ids=str)
def test_binder_package_installed_and_imports(req):
    version = md.version(req.name)
    assert req.specifier.contains(version, prereleases=True), \
        f"{req.name} {version} does not satisfy {req.specifier}"
    for name in import_names(req.name):
        importlib.import_module(name)


def test_binder_has_the_dashboard_stack():
    names = {r.name.lower().replace("-", "_") for r in requirements()}
    assert {"voila", "ipywidgets", "bokeh", "jupyter_bokeh", "numpy", "scipy"} <= names


def test_binder_readme_documents_the_url_path():
    text = (BINDER / "README.md").read_text()
    assert "urlpath=voila/render/dashboards/explorer.ipynb" in text
    for name in ("explorer", "regimes", "device"):
        assert (ROOT / "dashboards" / f"{name}.ipynb").is_file()
