"""The dashboard notebooks: a few lines each that import and display a view.

``dashboards/*.ipynb`` in the repository are written from :data:`NOTEBOOKS`
(a test checks they agree), and ``ekexplore serve`` writes them to a
temporary folder when it runs from an installed package.
"""
from __future__ import annotations

import json
from pathlib import Path

#: notebook name -> source of its single code cell
NOTEBOOKS = {
    "explorer": "from ekexplore.dashboards import explorer\n\nexplorer()",
    "regimes": "from ekexplore.dashboards import regimes\n\nregimes()",
    "device": "from ekexplore.dashboards import device\n\ndevice()",
}


def notebook_json(source):
    """A minimal nbformat-4 notebook holding one code cell."""
    return {
        "cells": [{"cell_type": "code", "execution_count": None, "id": "dashboard",
                   "metadata": {}, "outputs": [], "source": source.splitlines(True)}],
        "metadata": {"kernelspec": {"display_name": "Python 3", "language": "python",
                                    "name": "python3"},
                     "language_info": {"name": "python"}},
        "nbformat": 4, "nbformat_minor": 5,
    }


def write_notebooks(folder):
    """Write every dashboard notebook into ``folder``; returns the paths."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for name, source in NOTEBOOKS.items():
        path = folder / f"{name}.ipynb"
        path.write_text(json.dumps(notebook_json(source), indent=1) + "\n", encoding="utf-8")
        paths.append(path)
    return paths
