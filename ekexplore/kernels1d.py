"""Transport kernels for the slit (m = 0) and the tube (m = 1).

Three double-layer models, one output contract (see ``ekexplore._state``):

``thin``  Helmholtz–Smoluchowski slip with Bikerman-type surface conduction
          (any ion mixture, electro-osmotic part included).
``dh``    Debye–Hückel closed forms (Rice & Whitehead 1965 for the tube, the
          cosh solution for the slit), conduction to second order in zeta.
``pb``    the nonlinear Poisson–Boltzmann equation, solved in batch on a
          wall-resolving grid, two grids combined by Richardson extrapolation.

In scaled form every coefficient is a number times a unit:
L11 in R²/eta, L12 and L21 in eps V_T/eta, L22 in S/m, with V_T = kT/e.
"""
from __future__ import annotations

import numpy as np
from scipy import special

from ._state import F, R as R_GAS
from .doublelayer import make_grid, solve_pb, donnan_potential, PB_PHI_MAX
from .wall import flat_layer_integrals, osmotic_root_inverse
from .profiles import Profiles

__all__ = ["transport_1d", "MODELS", "wall_potential_isolated", "dh_wall_potential"]

MODELS = ("thin", "dh", "pb")

#: Computational spacing of the coarse pb grid in the log-mapped coordinate.
PB_DXI = 0.12
#: Fewest cells of the coarse pb grid.
PB_MIN_CELLS = 32
#: Grid nodes per batch chunk of the pb solve (sized for the CPU cache).
PB_CHUNK_NODES = 131072
#: Cells of the grid on which profiles are returned.
PROFILE_CELLS = 200


# --------------------------------------------------------------------------
# small closed forms, safe for K from 1e-3 to 1e5
# --------------------------------------------------------------------------
def _mean_factor(m, K):
    """G1 = <psi>/zeta for the DH potential: tanh(K)/K or 2 I1(K)/(K I0(K))."""
    if m == 0:
        return np.tanh(K) / K
    return 2.0 * special.ive(1, K) / (K * special.ive(0, K))


def _one_minus_mean_factor(m, K):
    """1 - G1 without cancellation at small K (series below K = 1e-3)."""
    small = K < 1e-3
    Ks = np.where(small, 1.0, K)
    if m == 0:
        exact = 1.0 - np.tanh(Ks) / Ks
        series = K**2 / 3.0 - 2.0 * K**4 / 15.0
    else:
        exact = 1.0 - 2.0 * special.ive(1, Ks) / (Ks * special.ive(0, Ks))
        series = K**2 / 8.0 - K**4 / 48.0
    return np.where(small, series, exact)


def _streaming_factor(m, K):
    """<(-f) u_hat> K^2 / (-phi_w) for the DH charge: the streaming integral.

    Slit: int_0^1 (1 - s^2) cosh(Ks) ds K^2 / (2 cosh K) = (K cosh K - sinh K)/(K cosh K).
    Tube: 2 int_0^1 s (1 - s^2) I0(Ks) ds K^2 / (4 I0(K)) = I2(K)/I0(K).
    """
    small = K < 1e-3
    Ks = np.where(small, 1.0, K)
    if m == 0:
        exact = (Ks - np.tanh(Ks)) / Ks
        series = K**2 / 3.0 - 2.0 * K**4 / 15.0
    else:
        exact = special.ive(2, Ks) / special.ive(0, Ks)
        series = K**2 / 8.0 - K**4 / 48.0
    return np.where(small, series, exact)


def _square_factor(m, K):
    """H = <psi^2>/zeta^2 for the DH potential."""
    if m == 0:
        return 0.5 * (1.0 / np.cosh(np.minimum(K, 350.0))**2 + np.tanh(K) / K)
    r = special.ive(1, K) / special.ive(0, K)
    return 1.0 - r**2


def _dh_profile(m, K, x):
    """psi/zeta of the DH solution on wall distances x (B, n)."""
    Kb = K[:, None]
    s = 1.0 - x
    if m == 0:
        return (np.exp(-Kb * x) + np.exp(-Kb * (1.0 + s))) / (1.0 + np.exp(-2.0 * Kb))
    return special.ive(0, Kb * s) / special.ive(0, Kb) * np.exp(-Kb * x)


def dh_wall_potential(m, K, sigma_s):
    """Scaled wall potential of the DH solution for scaled charge sigma R e/(eps kT)."""
    if m == 0:
        return sigma_s / (K * np.tanh(K))
    return sigma_s * special.ive(0, K) / (K * special.ive(1, K))


def wall_potential_isolated(z, w, K, sigma_s):
    """Scaled potential of an isolated flat wall (Grahame) for scaled charge sigma_s.

    Solves (sigma_s/K)^2 = 2 sum_j w_j (exp(-z_j phi) - 1) with the bisection of
    :func:`ekexplore.wall.osmotic_root_inverse`.
    """
    target = np.abs(sigma_s / K) / np.sqrt(2.0)
    return osmotic_root_inverse(np.asarray(z, dtype=float)[:, None], w, target,
                                np.sign(sigma_s))


# --------------------------------------------------------------------------
# one model on a flat batch
# --------------------------------------------------------------------------
def _flat(cond, R):
    """Flatten conditions to batch arrays; returns a dict of (B,) / (k, B) arrays."""
    B = int(np.prod(cond.shape)) if cond.shape else 1
    def f1(a):
        return np.broadcast_to(a, cond.shape).reshape(B).astype(float)
    def fk(a):
        return np.broadcast_to(a, a.shape[:1] + cond.shape).reshape(a.shape[0], B).astype(float)
    z = cond.valences.astype(float)
    c = fk(cond.concentrations)
    zz = np.sum(z[:, None]**2 * c, axis=0)
    out = dict(B=B, z=z, c=c, w=c / zz, D=fk(cond.diffusivities), T=f1(cond.temperature),
               eps=f1(cond.permittivity), eta=f1(cond.viscosity), kappa=f1(cond.kappa),
               R=f1(R), value=f1(cond.wall_value))
    out["VT"] = cond.thermal_voltage if np.ndim(cond.thermal_voltage) == 0 else None
    out["VT"] = f1(cond.thermal_voltage)
    out["K"] = out["kappa"] * out["R"]
    out["lam"] = z[:, None]**2 * F**2 * out["D"] / (R_GAS * out["T"])   # molar cond. [S m^2/mol]
    # wall values below 1e-150 (scaled) are exactly zero here: they carry no
    # physics, and subnormal numbers would defeat the relative Newton test
    def flush(a):
        return np.where(np.abs(a) < 1e-150, 0.0, a)
    if cond.wall_condition == "potential":
        out["phi_w"] = flush(out["value"] / out["VT"])
        out["sigma_s"] = None
    else:
        out["sigma_s"] = flush(out["value"] * out["R"] / (out["eps"] * out["VT"]))
        out["phi_w"] = None
    return out


def _assemble(b, m, L12s, L21s, mig_ion, conv_ion_s, phi_w, wall_charge, err, model):
    """Turn scaled per-point results into SI coefficient arrays (B,)."""
    eps, eta, VT, R = b["eps"], b["eta"], b["VT"], b["R"]
    L11 = R**2 / (eta * (m + 1) * (m + 3))
    L12 = eps * VT / eta * L12s
    L21 = eps * VT / eta * L21s
    conv_ion = b["z"][:, None] * F * b["c"] * eps * VT / eta * conv_ion_s
    return dict(L11=L11, L12=L12, L21=L21, L22_migration=np.sum(mig_ion, axis=0),
                L22_convection=np.sum(conv_ion, axis=0), ion_current=mig_ion + conv_ion,
                wall_potential=phi_w * VT, wall_charge=wall_charge, error=err,
                model=np.full(b["B"], model))


def _thin(b, m):
    if b["phi_w"] is not None:
        phi_w = b["phi_w"]
    else:
        phi_w = wall_potential_isolated(b["z"], b["w"], b["K"], b["sigma_s"])
    # slip: <u_eo>/E = -eps zeta / eta
    L12s = -phi_w
    # streaming: (P/A)(tau_w/G)(1/eta) * first moment of the diffuse charge,
    # tau_w/G = A/P, and int rho y dy = -eps zeta for any Gouy-Chapman layer
    first_moment_s = -phi_w
    L21s = first_moment_s * 1.0
    I_mig, I_conv = flat_layer_integrals(b["z"][:, None], b["c"], phi_w)
    per_area = (m + 1) / b["R"] / b["kappa"]                     # (P/A) / kappa
    bulk = b["lam"] * b["c"]
    mig_ion = bulk + per_area * bulk * I_mig
    # convection of each ion's excess over the bulk (the bulk part sums to zero
    # over the ions and only depends on the frame, so it is left out per ion)
    conv_ion_s = per_area * I_conv
    sigma = b["eps"] * b["VT"] * b["kappa"] * np.sign(phi_w) * np.sqrt(
        np.maximum(2.0 * np.sum(b["w"] * np.expm1(-b["z"][:, None] * phi_w[None]), axis=0), 0))
    if b["sigma_s"] is not None:
        sigma = b["value"]
    return _assemble(b, m, L12s, L21s, mig_ion, conv_ion_s, phi_w, sigma,
                     np.zeros(b["B"]), "thin")


def _dh(b, m):
    K = b["K"]
    phi_w = b["phi_w"] if b["phi_w"] is not None else dh_wall_potential(m, K, b["sigma_s"])
    G1 = _mean_factor(m, K)
    H = _square_factor(m, K)
    L12s = -phi_w * _one_minus_mean_factor(m, K)          # <phi> - phi_w
    L21s = -phi_w * _streaming_factor(m, K)               # K^2 <f u_hat>, f = -phi
    z = b["z"][:, None]
    mean_c = 1.0 - z * phi_w * G1 + 0.5 * z**2 * phi_w**2 * H   # <c_i>/c_i (2nd order)
    mig_ion = b["lam"] * b["c"] * mean_c
    # <(c/c_b - 1)(phi - phi_w)> = <-z phi (phi - phi_w)>: convection of the excess
    conv_ion_s = -z * phi_w**2 * (H - G1)
    sigma = b["eps"] * b["VT"] * phi_w * K**2 * G1 / (b["R"] * (m + 1))
    return _assemble(b, m, L12s, L21s, mig_ion, conv_ion_s, phi_w, sigma,
                     np.zeros(b["B"]), "dh")


def _inner_scale(b, m, phi_w_est):
    """x0 of the log grid: a quarter of the smaller of Debye and Gouy-Chapman lengths."""
    zc = np.max(np.abs(b["z"]))
    a = np.minimum(np.abs(zc * phi_w_est), 2.0 * PB_PHI_MAX)
    delta = 1.0 / (b["K"] * (1.0 + np.sinh(0.5 * a)))
    return 0.25 * np.minimum(delta, 1.0)


def _pb_scaled(b, m, grid, phi):
    """Scaled coefficients from a converged pb solution on ``grid``."""
    V = grid.volume
    phi_w = phi[:, 0]
    z = b["z"]
    em1 = np.expm1(-z[:, None, None] * phi[None])                  # (k, B, n)
    e = em1 + 1.0
    fvals = np.sum((z[:, None] * b["w"])[:, :, None] * em1, axis=0)  # (B, n), exact near 0
    K2 = b["K"][:, None]**2
    L12s = np.sum(V * phi, axis=1) - phi_w                          # <phi> - phi_w
    L21s = np.sum(V * K2 * fvals * grid.poiseuille, axis=1)         # K^2 <f u_hat>
    mean_c = np.sum(V[None] * e, axis=2)                            # <c_i>/c_i
    # <(c/c_b - 1)(phi - phi_w)>: convection of each ion's excess over the bulk
    conv_s = np.sum(V[None] * em1 * (phi - phi_w[:, None])[None], axis=2)
    mean_f = np.sum(V * fvals, axis=1)
    return np.stack([L12s, L21s]), mean_c, conv_s, mean_f


def _pb_wall_estimate(b, m):
    """Scaled wall potential, or for a charge wall an estimate of it: the larger
    of the isolated-wall (Grahame) and the uniform (Donnan) potentials."""
    if b["phi_w"] is not None:
        return b["phi_w"]
    iso = wall_potential_isolated(b["z"], b["w"], b["K"], b["sigma_s"])
    don = donnan_potential(b["z"], b["w"], -(m + 1) * b["sigma_s"] / b["K"]**2)
    return np.where(np.abs(don) > np.abs(iso), don, iso)


def _pb(b, m, accuracy=1e-6):
    """pb on a batch: points are grouped by grid size, so that every point's
    grid depends on its own parameters only (a batch gives the same numbers
    as single calls)."""
    phi_est = _pb_wall_estimate(b, m)
    zmax = np.max(np.abs(b["z"]))
    over = np.abs(zmax * phi_est) > PB_PHI_MAX
    if np.any(over):
        k = np.flatnonzero(over)[0]
        raise ValueError(
            f"charge_density = {b['value'][k]:g} C/m^2 needs a wall potential of about "
            f"{phi_est[k] * b['VT'][k]:.3g} V, beyond the solver range |z e zeta/kT| <= "
            f"{PB_PHI_MAX:g}; lower the charge, widen the channel or raise the concentration")
    x0 = _inner_scale(b, m, phi_est)
    # Richardson-extrapolated error goes as dxi^4: 5e-7 at the default spacing
    dxi = float(np.clip(PB_DXI * (accuracy / 1e-6)**0.25, 0.03, 0.3))
    need = np.maximum(PB_MIN_CELLS, np.ceil(np.log1p(1.0 / x0) / dxi))
    # grid sizes come in steps of sqrt(2), so a point's grid depends on itself only
    steps = np.ceil(2.0 * np.log2(need / PB_MIN_CELLS))
    level = np.round(PB_MIN_CELLS * 2.0 ** (steps / 2.0)).astype(int)
    out = None
    chunks = []
    for n in np.unique(level):
        idx = np.flatnonzero(level == n)
        # chunks of a few thousand points keep the work arrays in cache
        size = max(256, PB_CHUNK_NODES // int(n))
        chunks += [(int(n), idx[i:i + size]) for i in range(0, idx.size, size)]
    for n, idx in chunks:
        part = _pb_group(_subset(b, idx), m, x0[idx], n)
        if out is None:
            out = {k: (np.empty(v.shape[:-1] + (b["B"],), dtype=v.dtype)) for k, v in part.items()}
        for k, v in part.items():
            out[k][..., idx] = v
    return out


def _pb_group(b, m, x0, n):
    cond = "potential" if b["phi_w"] is not None else "charge"
    value = b["phi_w"] if cond == "potential" else b["sigma_s"]
    coarse = make_grid(m, x0, n)
    phi_c = solve_pb(coarse, b["K"], b["z"], b["w"], cond, value)
    fine = make_grid(m, x0, 2 * n)
    # start the fine solve from a cubic interpolation in the (uniform) mapped
    # coordinate: error ~ dxi^4, so Newton needs about two steps
    guess = np.empty(fine.x.shape)
    guess[:, ::2] = phi_c
    mid = 0.5 * (phi_c[:, 1:] + phi_c[:, :-1])
    mid[:, 1:-1] = (9.0 * (phi_c[:, 1:-2] + phi_c[:, 2:-1]) - phi_c[:, :-3] - phi_c[:, 3:]) / 16.0
    mid[:, 0] = (3.0 * phi_c[:, 0] + 6.0 * phi_c[:, 1] - phi_c[:, 2]) / 8.0
    mid[:, -1] = (3.0 * phi_c[:, -1] + 6.0 * phi_c[:, -2] - phi_c[:, -3]) / 8.0
    guess[:, 1::2] = mid
    phi_f = solve_pb(fine, b["K"], b["z"], b["w"], cond, value, phi0=guess)
    (lc, mc_c, cv_c, mf_c), (lf, mc_f, cv_f, mf_f) = (
        _pb_scaled(b, m, coarse, phi_c), _pb_scaled(b, m, fine, phi_f))

    def rich(a, c_):
        return (4.0 * c_ - a) / 3.0
    L12s, L21s = rich(lc, lf)
    mean_c = rich(mc_c, mc_f)
    conv_ion_s = rich(cv_c, cv_f)
    mean_f = rich(mf_c, mf_f)
    phi_w = rich(phi_c[:, 0], phi_f[:, 0])
    mig_ion = b["lam"] * b["c"] * mean_c
    # wall charge from overall neutrality: sigma P = -int rho dA
    rho_scale = b["eps"] * b["kappa"]**2 * b["VT"]
    sigma = -(b["R"] / (m + 1)) * rho_scale * mean_f
    if cond == "charge":
        sigma = b["value"]
    # error estimate: Richardson difference of the two grids, the largest over
    # the coefficients (it bounds the error of the fine grid; the extrapolated
    # value is better still)
    mig_c = np.sum(b["lam"] * b["c"] * mc_c, axis=0)
    mig_f = np.sum(b["lam"] * b["c"] * mc_f, axis=0)
    diffs = np.vstack([np.abs(lf - lc), np.abs(mig_f - mig_c)[None]]) / 3.0
    scales = np.vstack([np.abs(lf), np.abs(mig_f)[None]])
    err = np.max(diffs / np.maximum(scales, 1e-300), axis=0)
    err = np.where(np.abs(phi_w) > 0, err, np.abs(mig_f - mig_c) / 3.0 / mig_f)
    return _assemble(b, m, L12s, L21s, mig_ion, conv_ion_s, phi_w, sigma, err, "pb")


# --------------------------------------------------------------------------
# profiles on a common grid, any model
# --------------------------------------------------------------------------
def _profile_potential(b, m, model, grid, phi_w):
    if model == "pb":
        cond = "potential" if b["phi_w"] is not None else "charge"
        value = b["phi_w"] if cond == "potential" else b["sigma_s"]
        return solve_pb(grid, b["K"], b["z"], b["w"], cond, value)
    if model == "dh":
        return phi_w[:, None] * _dh_profile(m, b["K"], grid.x)
    # thin: the Gouy-Chapman layer of the nearest wall (counter-ion valence)
    zc = np.max(np.abs(b["z"]))
    t = np.tanh(zc * phi_w / 4.0)[:, None] * np.exp(-b["K"][:, None] * grid.x)
    return 4.0 / zc * np.arctanh(t)


def _profiles(cond, R, m, models, wall_potential):
    """Factory for the profiles callable of a (possibly mixed-model) batch."""
    def make(pressure_gradient=1.0, field=1.0):
        b = _flat(cond, R)
        phi_w_all = (np.broadcast_to(wall_potential, cond.shape).reshape(b["B"])
                     / b["VT"])
        mod = np.broadcast_to(models, cond.shape).reshape(b["B"])
        x0 = _inner_scale(b, m, phi_w_all)
        grid = make_grid(m, x0, PROFILE_CELLS)
        phi = np.empty(grid.x.shape)
        for name in MODELS:
            idx = np.flatnonzero(mod == name)
            if idx.size == 0:
                continue
            bi = _subset(b, idx)
            gi = make_grid(m, x0[idx], PROFILE_CELLS)
            phi[idx] = _profile_potential(bi, m, name, gi, phi_w_all[idx])
        return Profiles.from_1d(m, grid, phi, b, mod, cond, pressure_gradient, field)
    return make


def _subset(b, idx):
    out = {}
    for k, v in b.items():
        if isinstance(v, np.ndarray) and v.ndim == 1 and v.shape[0] == b["B"] and k != "z":
            out[k] = v[idx]
        elif isinstance(v, np.ndarray) and v.ndim == 2 and v.shape[1] == b["B"]:
            out[k] = v[:, idx]
        else:
            out[k] = v
    out["B"] = len(idx)
    return out


def transport_1d(m, half_size, cond, model, options):
    """Kernel for slit (m = 0) and tube (m = 1): see ``ekexplore._state``."""
    from .regimes import choose_models
    b = _flat(cond, np.broadcast_to(half_size, cond.shape))
    if model == "auto":
        phi_est = b["phi_w"] if b["phi_w"] is not None else _pb_wall_estimate(b, m)
        chosen, est = choose_models(b["K"], phi_est, b["z"], m, options.get("tol", 0.01),
                                    condition=cond.wall_condition, weights=b["w"])
    else:
        chosen = np.full(b["B"], model)
        est = None
    parts = {}
    accuracy = options.get("accuracy") or 1e-6
    for name, fn in (("thin", _thin), ("dh", _dh), ("pb", _pb)):
        idx = np.flatnonzero(chosen == name)
        if idx.size:
            args = (accuracy,) if name == "pb" else ()
            parts[name] = (idx, fn(_subset(b, idx), m, *args))
    keys = ("L11", "L12", "L21", "L22_migration", "L22_convection", "wall_potential",
            "wall_charge", "error")
    out = {k: np.empty(b["B"]) for k in keys}
    out["ion_current"] = np.empty((len(b["z"]), b["B"]))
    out["model"] = np.empty(b["B"], dtype="<U4")
    for idx, res in parts.values():
        for k in keys:
            out[k][idx] = res[k]
        out["ion_current"][:, idx] = res["ion_current"]
        out["model"][idx] = res["model"]
    if est is not None:
        # a closed-form model's error is the a-priori estimate that chose it
        for name in ("thin", "dh"):
            sel = out["model"] == name
            out["error"][sel] = est[name][sel]
    shape = cond.shape
    for k in keys:
        out[k] = out[k].reshape(shape)
    out["ion_current"] = out["ion_current"].reshape((-1,) + shape)
    out["model"] = out["model"].reshape(shape)
    out["profiles"] = _profiles(cond, np.broadcast_to(half_size, shape), m, out["model"],
                                out["wall_potential"])
    return out
