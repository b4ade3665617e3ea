"""Dashboards: a coupling-matrix explorer, regime maps and a device calculator.

Layers: :mod:`.state` (validated inputs, no GUI), :mod:`.compute` (the public
``ekexplore`` API only), and one thin view per dashboard (ipywidgets controls,
bokeh figures shown through jupyter_bokeh). Each function below builds a view
and returns its widget; pass one :class:`State` to several of them to keep
them in step.

Needs the ``dashboard`` extra (ipywidgets, bokeh, jupyter_bokeh, voila).
"""
from __future__ import annotations

__all__ = ["State", "explorer", "regimes", "device", "shared_state"]

from .state import State

_SHARED = None


def shared_state():
    """The kernel-wide state used when no state is passed."""
    global _SHARED
    if _SHARED is None:
        _SHARED = State()
    return _SHARED


def explorer(state=None):
    """The coupling-matrix explorer widget."""
    from .explorer import ExplorerView
    return ExplorerView(state or shared_state()).widget


def regimes(state=None):
    """The regime-map widget."""
    from .regimes import RegimesView
    return RegimesView(state or shared_state()).widget


def device(state=None):
    """The device-calculator widget."""
    from .device import DeviceView
    return DeviceView(state or shared_state()).widget
