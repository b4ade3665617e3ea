"""The transport kernel shared by every 2D section (see ``ekexplore._state``).

Per parameter point it builds (or takes from the cache) three graded meshes
with n/2, n and 2n cells across, solves the potential (Debye-Hueckel or
Poisson-Boltzmann) and the flow on each, and returns the Richardson
extrapolation of the two finer levels. The reported error is the difference
between that and the extrapolation of the two coarser levels (the error
estimate of the coarser extrapolation) when the levels converge at second
order, and the error estimate of the finest level itself when they do not
yet (checked against closed forms and the 1D core in the tests). If it misses the target accuracy the resolution is
raised once, as far as the estimate asks.
"""
from __future__ import annotations

import numpy as np

from .._state import F, R as R_GAS
from ._meshes import build_mesh
from ._numerics import flow_profile, harmonic_extension, solve_potential

__all__ = ["section_kernel", "DEFAULT_ACCURACY", "resolution", "scaled_solution",
           "flow_solution"]

#: Target relative error of the 2D solution when none is given [-].
DEFAULT_ACCURACY = 1e-3
#: Accuracy below which the mesh is not refined further.
ACCURACY_FLOOR = 1e-7
#: Middle-level cells across the narrow direction at the default accuracy.
_N_DEFAULT = 16
#: Largest middle-level resolution (the fine level doubles it).
_N_MAX = 128
#: kappa * half-size above which a constant-charge wall starts from 32 cells.
_THIN_CHARGE_K = 2000.0


def resolution(accuracy):
    """Middle-level cells n (a multiple of 16) for a target relative error.

    Three levels n/2, n, 2n are solved; the extrapolated error falls about as
    n^-4, so n grows as accuracy^-1/4 from 16 cells at 1e-3.
    """
    acc = max(float(accuracy), ACCURACY_FLOOR)
    n = _N_DEFAULT * (DEFAULT_ACCURACY / acc) ** 0.25
    return int(min(_N_MAX, max(16, 16 * int(np.ceil(n / 16.0 - 1e-9)))))


def _refined(n, err, accuracy):
    """The resolution the error estimate asks for (error ~ n^-4), a multiple of 16."""
    return int(min(_N_MAX, 16 * int(np.ceil(1.05 * n * (err / accuracy) ** 0.25 / 16))))


def _gouy(lam, z, phi_w):
    """Scaled inner length of a strongly charged wall: lam / (1 + sinh(|z phi_w|/2))."""
    zmax = np.max(np.abs(z))
    a = min(abs(zmax * phi_w), 80.0)
    if a < 2.0:
        return None
    return lam / (1.0 + np.sinh(0.5 * a))


def scaled_solution(mesh, kl2, w, z, condition, value, model, guess=None):
    """Potential and the scaled area means on one mesh.

    Returns a dict: ``phi`` nodal potential, ``d`` = phi - h with h the
    discrete harmonic function equal to phi on the wall (u_eo over
    eps kT/(e eta) E), ``u`` the scaled Poiseuille profile, ``g`` the scaled
    charge density, and the means ``u_mean`` <u>, ``l12`` <d>, ``l21``
    (kappa L)^2 <g u>, ``mean_c`` <c_i>/c_i and ``conv`` <c_i/c_i d> per ion,
    ``phi_wall`` the wall-averaged potential and ``mean_g`` <g>.
    """
    offset, dev, info = solve_potential(mesh, kl2, w, z, condition, value, model, guess)
    phi = offset + dev
    u = flow_profile(mesh)
    m = mesh.m / mesh.area
    if condition == "potential":
        d = dev
    else:
        d = dev - harmonic_extension(mesh, dev)
    zc = z[:, None]
    if model == "pb":
        conc = np.exp(-zc * offset) * np.exp(-zc * dev[None, :])
        g = w @ conc
        conv_factor = conc
    else:   # dh: linear charge, Boltzmann factors to second (migration) and first order
        g = -phi
        conc = 1.0 - zc * phi[None, :] + 0.5 * zc**2 * phi[None, :] ** 2
        conv_factor = 1.0 - zc * phi[None, :]
    wall = mesh.wall
    return {
        "phi": phi, "d": d, "u": u, "g": g, "info": info,
        "u_mean": float(m @ u),
        "l12": float(m @ d),
        "l21": float(kl2 * (m @ (g * u))),
        "mean_c": conc @ m,
        "conv": (conv_factor * d[None, :]) @ m,
        "phi_wall": float(offset + mesh.b[wall] @ dev[wall] / mesh.b[wall].sum()),
        "mean_g": float(m @ g),
        "area": mesh.area, "perimeter": mesh.perimeter,
    }


def prolong(coarse, fine, values):
    """Coarse nodal values carried to the fine mesh, a start for Newton there.

    Fine nodes that coincide with coarse ones (the graded maps are nested)
    take their value; the others the mean of their coinciding neighbours,
    or of the nearest coarse node when none is adjacent.
    """
    from scipy.spatial import cKDTree
    tree = getattr(coarse, "_tree", None)
    if tree is None:
        tree = coarse._tree = cKDTree(coarse.points)
    dist, j = tree.query(fine.points)
    same = dist <= 1e-9 * np.ptp(fine.points[:, 0])
    out = values[j].astype(float)
    adj = (fine.K != 0).astype(float)
    known = np.where(same, out, 0.0)
    num = adj @ known
    cnt = adj @ same.astype(float)
    fill = ~same & (cnt > 0)
    out[fill] = num[fill] / cnt[fill]
    return out


def flow_solution(mesh):
    """Scaled flow means on one mesh: <u> and the wall-shear integral over the area.

    The wall shear is the discrete boundary flux of the flow, sum over wall
    nodes of (m - K u), the force the walls exert per unit length and G.
    """
    u = flow_profile(mesh)
    r = mesh.m - mesh.K @ u
    return {"u": u, "u_mean": float(mesh.m @ u / mesh.area),
            "shear": float(r[mesh.wall].sum() / mesh.area)}


def _levels(kind, dims, n, lam, gouy, kl2, w, z, condition, value, model, lam_c, conv_c):
    """Solutions on the meshes with n/2, n and 2n cells.

    Returns the solutions with n and 2n cells (their Richardson combination is
    the result) and its estimated relative error: the difference between the
    Richardson values of the pairs (n, 2n) and (n/2, n), largest over the
    electro-osmotic, streaming and conductive coefficients. It is the error
    estimate of the coarser extrapolation, so it bounds the finer one while
    the solution converges monotonically. ``lam_c`` (lambda_i c_i) and ``conv_c``
    (z_i F c_i eps kT/(e eta)) turn the scaled means into the migration and
    convection parts of the conductive coefficient [S/m].
    (The hydraulic coefficient comes
    from meshes graded for the flow alone, see :func:`_hydraulic`.)
    """
    meshes = [build_mesh(kind, dims, k, lam, gouy) for k in (n // 2, n, 2 * n)]
    sols = [scaled_solution(meshes[0], kl2, w, z, condition, value, model)]
    for i in (1, 2):
        sols.append(scaled_solution(meshes[i], kl2, w, z, condition, value, model,
                                    guess=prolong(meshes[i - 1], meshes[i], sols[-1]["phi"])))

    def coeffs(r):
        out = [lam_c @ r["mean_c"] + conv_c @ r["conv"]]        # conductive coefficient
        if abs(sols[2]["l12"]) > 1e-300:
            out += [r["l12"], r["l21"]]
        return np.array(out)

    c0, c1, c2 = (coeffs(r) for r in sols)
    return sols[1], sols[2], _estimate(c0, c1, c2)


def _estimate(c0, c1, c2):
    """Relative error of the extrapolation of (c1, c2), from three levels.

    Where the successive differences shrink by 2.5-6.5 per halving (the
    second-order asymptotic range), the difference between the two
    extrapolations (c0, c1) and (c1, c2); elsewhere (not yet asymptotic)
    the error estimate of the finest level itself, (c2 - c1)/3, which is
    larger and does not rely on the extrapolation.
    """
    scale = np.maximum(np.abs(c2), 1e-300)
    d1, d2 = c1 - c0, c2 - c1
    tiny = np.abs(d2) <= 1e-12 * scale
    ratio = np.where(tiny, 4.0, d1 / np.where(tiny, 1.0, d2))
    asymptotic = (ratio >= 2.5) & (ratio <= 6.5)
    three = np.abs(_rich(c1, c2) - _rich(c0, c1)) / scale
    two = np.abs(d2) / 3.0 / scale
    return float(np.max(np.where(asymptotic | tiny, three, np.maximum(three, two))))


def _hydraulic(channel, values, kind, dims, L, n, accuracy, need_shear=True):
    """<u>/(G/eta) [m^2], its estimated error and the scaled wall-shear integral,
    from meshes graded for the flow alone (exact closed forms where they exist).
    Three levels as in :func:`_levels`; the resolution is refined once if the
    estimate misses ``accuracy``."""
    exact = channel._exact_flow_mean_values(*values)
    if exact is not None and not need_shear:
        return exact, 0.0, None
    for attempt in range(2):
        f0, f1, f2 = (flow_solution(build_mesh(kind, dims, k)) for k in (n // 2, n, 2 * n))
        r2 = _rich(f1["u_mean"], f2["u_mean"])
        err = _estimate(*(np.array([f["u_mean"]]) for f in (f0, f1, f2)))
        if err <= accuracy or n >= _N_MAX:
            break
        n = _refined(n, err, accuracy)
    shear = _rich(f1["shear"], f2["shear"])
    if exact is not None:
        return exact, 0.0, shear
    return L**2 * r2, err, shear


def _rich(c, f):
    return (4.0 * f - c) / 3.0


def _flat_conditions(cond):
    shape = cond.shape
    B = int(np.prod(shape)) if shape else 1

    def f1(a):
        return np.broadcast_to(a, shape).reshape(B).astype(float)

    def fk(a):
        return np.broadcast_to(a, a.shape[:1] + shape).reshape(a.shape[0], B).astype(float)

    z = np.asarray(cond.valences, dtype=float)
    c = fk(cond.concentrations)
    out = dict(B=B, z=z, c=c, D=fk(cond.diffusivities), T=f1(cond.temperature),
               eps=f1(cond.permittivity), eta=f1(cond.viscosity), kappa=f1(cond.kappa),
               value=f1(cond.wall_value), VT=f1(cond.thermal_voltage))
    zz = np.sum(z[:, None] ** 2 * c, axis=0)
    out["w"] = z[:, None] * c / zz                       # z_i c_i / sum z^2 c
    out["lam"] = z[:, None] ** 2 * F**2 * out["D"] / (R_GAS * out["T"])
    return out


def _choose(channel, b, geo, model, cond, options):
    """Models per point; for 'auto' the a-priori estimates of ekexplore.regimes."""
    if model != "auto":
        return np.full(b["B"], model), None
    try:
        from ..regimes import choose_models
        from ..kernels1d import wall_potential_isolated
    except ImportError:   # pragma: no cover - the core always ships them
        return np.full(b["B"], "pb"), None
    Lh = geo["half_size"]
    K = b["kappa"] * Lh
    if cond.wall_condition == "potential":
        phi_est = b["value"] / b["VT"]
    else:
        sig = b["value"] * Lh / (b["eps"] * b["VT"])
        iso = wall_potential_isolated(b["z"], b["c"] / np.sum(b["z"][:, None]**2 * b["c"], 0),
                                      K, sig)
        # Donnan-like estimate for overlapped layers: charge over the area's screening
        dh = sig * geo["perimeter"] * Lh / (geo["area"] * K**2)
        phi_est = np.where(np.abs(dh) > np.abs(iso), np.clip(dh, -40, 40), iso)
    weights = b["c"] / np.sum(b["z"][:, None]**2 * b["c"], 0)
    chosen, est = choose_models(K, phi_est, b["z"], "section", options.get("tol", 0.01),
                                condition=cond.wall_condition, weights=weights)
    return np.asarray(chosen), est


def section_kernel(channel, cond, model, options):
    """Kernel for a 2D section: see ``ekexplore._state`` for the returned dict."""
    from ..wall import flat_layer_integrals
    from ..kernels1d import wall_potential_isolated

    accuracy = options.get("accuracy")
    accuracy = DEFAULT_ACCURACY if accuracy is None else accuracy
    n = resolution(accuracy)
    b = _flat_conditions(cond)
    B = b["B"]
    shape = cond.shape
    geo = channel._geometry_arrays(shape)          # dict of (B,) arrays and per-point specs
    chosen, est = _choose(channel, b, geo, model, cond, options)
    nion = len(b["z"])
    out = {k: np.empty(B) for k in ("L11", "L12", "L21", "L22_migration", "L22_convection",
                                    "wall_potential", "wall_charge", "error")}
    out["ion_current"] = np.empty((nion, B))
    z = b["z"]
    for k in range(B):
        spec = geo["spec"][k]                      # (kind, scaled dims, L)
        kind, dims, L = spec
        eps, eta, VT = b["eps"][k], b["eta"][k], b["VT"][k]
        kappa = b["kappa"][k]
        c, w, lam_i = b["c"][:, k], b["w"][:, k], b["lam"][:, k]
        lam = 1.0 / (kappa * L)
        A_exact, P_exact = geo["area"][k], geo["perimeter"][k]
        name = chosen[k]
        if cond.wall_condition == "potential":
            phi_w = b["value"][k] / VT
            sig_s = None
        else:
            sig_s = b["value"][k] * L / (eps * VT)
            phi_w = None
        if name == "thin":
            if phi_w is None:
                phi_w = float(wall_potential_isolated(z, (c / np.sum(z**2 * c))[:, None],
                                                      np.array([kappa * L]),
                                                      np.array([sig_s]))[0])
            u_mean, err, shear = _hydraulic(channel, geo["values"][k], kind, dims, L, n,
                                            accuracy)
            L12 = -eps * VT * phi_w / eta
            # streaming: wall shear per G times the first moment of the diffuse
            # charge (int rho y dy = -eps zeta), over eta and the area
            L21 = (-eps * VT * phi_w / eta) * shear
            I_mig, I_conv = flat_layer_integrals(z[:, None], c[:, None], np.array([phi_w]))
            I_mig, I_conv = I_mig[:, 0], I_conv[:, 0]
            pa = P_exact / A_exact / kappa
            bulk = lam_i * c
            mig = bulk + pa * bulk * I_mig
            conv_s = -phi_w + pa * I_conv
            conv = z * F * c * eps * VT / eta * conv_s
            sigma = eps * VT * kappa * np.sign(phi_w) * np.sqrt(
                max(2.0 * np.sum((c / np.sum(z**2 * c)) * np.expm1(-z * phi_w)), 0.0))
            if sig_s is not None:
                sigma = b["value"][k]
            L11 = u_mean / eta
            wall_phi = phi_w
        else:
            series = None
            if name == "dh" and phi_w is not None and options.get("rectangle_series", True):
                series = channel._dh_series_values(*geo["values"][k], kappa)
            if series is not None and series["tail"] < 0.1 * accuracy:
                s = series
                L11 = s["mean_u"] / eta
                L12 = eps * VT / eta * (-phi_w * s["one_minus_mean_phi"])
                L21 = eps * VT / eta * (-kappa**2 * phi_w * s["mean_phi_u"])
                mean_c = 1.0 - z * phi_w * s["mean_phi"] + 0.5 * z**2 * phi_w**2 * s["mean_phi2"]
                conv_s = -phi_w * s["one_minus_mean_phi"] - z * phi_w**2 * (
                    s["mean_phi2"] - s["mean_phi"])
                mig = lam_i * c * mean_c
                conv = z * F * c * eps * VT / eta * conv_s
                sigma = eps * VT * kappa**2 * phi_w * s["mean_phi"] * A_exact / P_exact
                wall_phi = phi_w
                err = s["tail"]
            else:
                value = phi_w if phi_w is not None else sig_s
                cond_name = "potential" if phi_w is not None else "charge"
                gouy = None
                if phi_w is not None and name == "pb":
                    gouy = _gouy(lam, z, phi_w)
                elif name == "pb":
                    est_phi = wall_potential_isolated(z, (c / np.sum(z**2 * c))[:, None],
                                                      np.array([kappa * L]),
                                                      np.array([sig_s]))[0]
                    gouy = _gouy(lam, z, est_phi)
                kl2 = (kappa * L) ** 2
                nk = n
                if cond_name == "charge" and kappa * L > _THIN_CHARGE_K:
                    # measured: with a constant-charge wall and layers this thin the
                    # coarsest of three 16-cell levels is not yet asymptotic, and
                    # the three-level estimate can miss errors of 0.5 %
                    nk = max(nk, 32)
                for attempt in range(2):
                    rc, rf, err = _levels(kind, dims, nk, lam, gouy, kl2, w, z, cond_name,
                                          value, name, lam_i * c, z * F * c * eps * VT / eta)
                    if err <= accuracy or nk >= _N_MAX:
                        break
                    nk = _refined(nk, err, accuracy)   # refine once, as the estimate asks
                ex = {key: _rich(rc[key], rf[key]) for key in
                      ("u_mean", "l12", "l21", "mean_c", "conv", "phi_wall", "mean_g")}
                u_mean, err_flow, _ = _hydraulic(channel, geo["values"][k], kind, dims, L, n,
                                                 accuracy, need_shear=False)
                err = max(err, err_flow)
                L11 = u_mean / eta
                L12 = eps * VT / eta * ex["l12"]
                L21 = eps * VT / eta * ex["l21"]
                mig = lam_i * c * ex["mean_c"]
                conv = z * F * c * eps * VT / eta * ex["conv"]
                # wall charge from neutrality: sigma P = -int rho dA
                sigma = -(eps * kappa**2 * VT) * ex["mean_g"] * rf["area"] / rf["perimeter"] * L
                if sig_s is not None:
                    sigma = b["value"][k]
                wall_phi = ex["phi_wall"]
        out["L11"][k] = L11
        out["L12"][k] = L12
        out["L21"][k] = L21
        out["L22_migration"][k] = np.sum(mig)
        out["L22_convection"][k] = np.sum(conv)
        out["ion_current"][:, k] = mig + conv
        out["wall_potential"][k] = wall_phi * VT
        out["wall_charge"][k] = sigma
        out["error"][k] = err
    if est is not None:
        for name in ("thin", "dh"):
            sel = chosen == name
            out["error"][sel] = np.maximum(out["error"][sel], est[name][sel])
    for key in list(out):
        if key == "ion_current":
            out[key] = out[key].reshape((nion,) + shape)
        else:
            out[key] = out[key].reshape(shape)
    out["model"] = chosen.reshape(shape) if shape else str(chosen[0])
    from .profiles import section_profiles_factory
    out["profiles"] = section_profiles_factory(channel, cond, out["model"], accuracy)
    return out
