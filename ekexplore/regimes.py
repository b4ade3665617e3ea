"""The transport regime in words, from computed numbers (for the screens).

The model table, the error estimates and the ``auto`` choice live in
:mod:`ekexplore.models`.
"""
from __future__ import annotations

from ._validate import check_scalar

__all__ = ["regime_verdict"]


def regime_verdict(kappa_size, slip_ratio, dukhin, counterion_share):
    """A one-line description of the transport regime, from computed numbers.

    Parameters
    ----------
    kappa_size : float
        kappa x half-size [-].
    slip_ratio : float
        Slip-model electro-osmotic coefficient over the chosen model's [-].
    dukhin : float
        Surface over bulk conduction [-].
    counterion_share : float
        Counter-ion share of the conduction current [-].

    Examples
    --------
    >>> regime_verdict(0.8, 3.2, 5.0, 0.9)
    'double layers overlap: kappa*a = 0.8; the slip model overestimates electro-osmotic flow by 3.2x; surface conduction dominates (Du = 5); perm-selective: counter-ions carry 90% of the current'
    """
    kappa_size = check_scalar("kappa_size", kappa_size, 0.0, None)
    slip_ratio = check_scalar("slip_ratio", slip_ratio)
    dukhin = check_scalar("dukhin", dukhin)
    counterion_share = check_scalar("counterion_share", counterion_share)
    parts = []
    if kappa_size < 1:
        parts.append(f"double layers overlap: kappa*a = {kappa_size:.2g}")
    elif kappa_size < 10:
        parts.append(f"double layers are thick: kappa*a = {kappa_size:.2g}")
    else:
        parts.append(f"thin double layers: kappa*a = {kappa_size:.3g}")
    if abs(slip_ratio - 1.0) > 0.05:
        word = "overestimates" if slip_ratio > 1 else "underestimates"
        parts.append(f"the slip model {word} electro-osmotic flow by {slip_ratio:.2g}x")
    else:
        parts.append("the slip (Helmholtz-Smoluchowski) model holds within 5%")
    if dukhin > 1:
        parts.append(f"surface conduction dominates (Du = {dukhin:.2g})")
    elif dukhin > 0.1:
        parts.append(f"surface conduction matters (Du = {dukhin:.2g})")
    if counterion_share > 0.8:
        parts.append(f"perm-selective: counter-ions carry {counterion_share:.0%} of the current")
    return "; ".join(parts)
