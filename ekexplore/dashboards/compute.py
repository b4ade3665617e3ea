"""Compute for the dashboards: plain functions of a :class:`State`.

Only the public ``ekexplore`` API is used. Each function returns plain
numbers, arrays and strings that a view shows as they are, so tests can
compare them with ``ekexplore.solve`` directly.
"""
from __future__ import annotations

import io
import warnings as _warnings
from dataclasses import dataclass, field

import numpy as np
from scipy import constants

import ekexplore as ek
from ekexplore.transport import CONDUCTANCE_UNITS, RESULT_UNITS

from . import units as U
from .units import eng, num

__all__ = ["Explored", "explore", "explore_matrix", "explore_fields", "verdict", "matrix_csv",
           "profiles_csv", "field_images"]


def scalar(x):
    """A 0-d result as a Python float (first element of an array)."""
    return float(np.asarray(x, dtype=float).reshape(-1)[0])


def text(x):
    """A 0-d string result (e.g. the model used) as a Python str."""
    return str(np.asarray(x).reshape(-1)[0])


@dataclass
class Curves:
    """Fields along one line across the section, for the profile plots."""

    x: np.ndarray                  # position along the line [m]
    from_wall: bool                # x measured from the wall (2D cut) or from the centre (1D)
    label: str                     # what x is
    potential: np.ndarray          # [V]
    concentrations: np.ndarray     # (n_ions, n) [mol/m^3]
    ion_names: tuple
    charge_density: np.ndarray     # [C/m^3]
    velocity_pressure: np.ndarray  # [m/s]
    velocity_electroosmotic: np.ndarray
    current_migration: np.ndarray  # [A/m^2]
    current_convective: np.ndarray
    debye_length: float            # [m]
    wall: float                    # x of the wall [m]


def curves(prof):
    """Profile curves of a 1D ``Profiles`` or, for a 2D section, along the cut
    from the wall point nearest the centre to the centre."""
    f = lambda a: np.asarray(a, dtype=float).reshape(-1)  # noqa: E731
    if prof.mesh is not None:     # a 2D section: the cut from the wall to the centre
        cut = prof.wall_normal()
        conc = np.stack([f(cut[f"c_{n}"]) for n in prof.ion_names])
        return Curves(x=f(cut["distance"]), from_wall=True,
                      label="distance from the nearest wall, along the cut to the centre",
                      potential=f(cut["potential"]), concentrations=conc,
                      ion_names=tuple(prof.ion_names), charge_density=f(cut["charge_density"]),
                      velocity_pressure=f(cut["velocity_pressure"]),
                      velocity_electroosmotic=f(cut["velocity_electroosmotic"]),
                      current_migration=f(cut["current_migration"]),
                      current_convective=f(cut["current_convective"]),
                      debye_length=float(prof.debye_length), wall=0.0)
    x = f(prof.coordinate)
    name = "mid-plane" if prof.coordinate_name == "y" else "axis"
    conc = np.asarray(prof.concentrations, dtype=float).reshape(len(prof.ion_names), -1)
    return Curves(x=x, from_wall=False, label=f"distance from the {name} {prof.coordinate_name}",
                  potential=f(prof.potential), concentrations=conc,
                  ion_names=tuple(prof.ion_names), charge_density=f(prof.charge_density),
                  velocity_pressure=f(prof.velocity_pressure),
                  velocity_electroosmotic=f(prof.velocity_electroosmotic),
                  current_migration=f(prof.current_migration),
                  current_convective=f(prof.current_convective),
                  debye_length=scalar(prof.debye_length), wall=float(np.max(x)))


#: Rasterisations of recent meshes: digest -> (triangle per point, weights)
_RASTERS: dict = {}


def _raster(px, py, tris, ox, oy, dx, dy, nx, ny):
    """Locate the points of a regular lattice (ox + i dx, oy + j dy), i < nx,
    j < ny, in a triangle mesh: for each lattice point the index of a triangle
    holding it (or -1) and its barycentric weights.

    Every triangle is matched with the lattice points inside its bounding box
    (a vectorised scan), so no point inside the mesh is missed.
    """
    T = np.asarray(tris)
    X = (px[T] - ox) / dx          # (nt, 3) in lattice units
    Y = (py[T] - oy) / dy
    i0 = np.clip(np.ceil(X.min(1) - 1e-9), 0, nx).astype(np.int64)
    i1 = np.clip(np.floor(X.max(1) + 1e-9), -1, nx - 1).astype(np.int64)
    j0 = np.clip(np.ceil(Y.min(1) - 1e-9), 0, ny).astype(np.int64)
    j1 = np.clip(np.floor(Y.max(1) + 1e-9), -1, ny - 1).astype(np.int64)
    wi = np.maximum(i1 - i0 + 1, 0)
    wj = np.maximum(j1 - j0 + 1, 0)
    cnt = wi * wj
    t = np.repeat(np.arange(len(T)), cnt)
    start = np.repeat(np.cumsum(cnt) - cnt, cnt)
    k = np.arange(int(cnt.sum())) - start
    i = i0[t] + k % wi[t]
    j = j0[t] + k // wi[t]
    xa, ya = X[t, 0], Y[t, 0]
    v0x, v0y = X[t, 1] - xa, Y[t, 1] - ya
    v1x, v1y = X[t, 2] - xa, Y[t, 2] - ya
    qx, qy = i - xa, j - ya
    den = v0x * v1y - v0y * v1x
    den = np.where(den == 0, np.inf, den)
    l1 = (qx * v1y - qy * v1x) / den
    l2 = (v0x * qy - v0y * qx) / den
    l0 = 1.0 - l1 - l2
    tol = 1e-9
    ok = (l0 >= -tol) & (l1 >= -tol) & (l2 >= -tol)
    flat = (j * nx + i)[ok]
    tri = np.full(nx * ny, -1, dtype=np.int64)
    lam = np.zeros((nx * ny, 3))
    tri[flat] = t[ok]
    lam[flat] = np.stack([l0[ok], l1[ok], l2[ok]], 1)
    return tri, lam


def _rasterise(prof, ox, oy, dx, dy, nx, ny):
    """_raster for a profile's mesh, remembered for the last few meshes."""
    import hashlib
    h = hashlib.blake2b(digest_size=16)
    for a in (prof.x, prof.y, np.asarray(prof.triangles), np.array([ox, oy, dx, dy, nx, ny])):
        h.update(np.ascontiguousarray(a).tobytes())
    key = h.hexdigest()
    hit = _RASTERS.get(key)
    if hit is None:
        hit = _raster(np.asarray(prof.x, float), np.asarray(prof.y, float), prof.triangles,
                      ox, oy, dx, dy, nx, ny)
        _RASTERS[key] = hit
        while len(_RASTERS) > 16:
            _RASTERS.pop(next(iter(_RASTERS)))
    return hit


def _centreline(prof, n=201):
    """The horizontal cut through the centre, wall to wall, interpolated on the
    mesh's own triangles (every point inside the mesh gets its value)."""
    x, y = np.asarray(prof.x, float), np.asarray(prof.y, float)
    yc = float(prof.centre[1])
    c = prof.centreline(n=n)
    xs = np.asarray(c["x"], float)
    xa, xb = float(np.nanmin(xs)), float(np.nanmax(xs))
    dx = (xb - xa) / (n - 1)
    tri, lam = _raster(x, y, prof.triangles, xa, yc, dx, 1.0, n, 1)
    ok = tri >= 0
    nodes = np.asarray(prof.triangles)[np.where(ok, tri, 0)]
    out = {"x": xa + dx * np.arange(n), "y": np.full(n, yc)}
    for k in ("velocity_pressure", "velocity_electroosmotic", "potential"):
        v = np.asarray(getattr(prof, k), float)
        out[k] = np.where(ok, np.sum(v[nodes] * lam, axis=1), np.nan)
    return out


IMAGE_FIELDS = ("potential", "velocity_electroosmotic", "velocity_pressure", "charge_density")


def field_images(prof, n=160):
    """Images of a 2D section's fields, one value per pixel, and two cuts.

    The image spans the section's bounding box exactly; pixels are square
    (nx/ny follows the aspect ratio, at least 24 on the short side). Each
    pixel takes the linear interpolation of the nodal fields at its centre;
    a pixel whose centre falls just outside the meshed polygon but which
    touches the section (a corner inside) takes its nearest node's value, so
    the whole cross-section is filled; pixels wholly outside stay NaN
    (transparent).
    """
    if prof.mesh is None:          # a slit or tube: no image
        return None
    from scipy.spatial import cKDTree
    x, y = np.asarray(prof.x, float), np.asarray(prof.y, float)
    x0, y0 = float(x.min()), float(y.min())
    W, H = float(np.ptp(x)), float(np.ptp(y))
    if W >= H:
        nx, ny = n, max(24, int(round(n * H / W)))
    else:
        nx, ny = max(24, int(round(n * W / H))), n
    dx, dy = W / nx, H / ny
    T = np.asarray(prof.triangles)
    # pixel centres, and pixel corners (an (nx+1) x (ny+1) lattice)
    tri, lam = _rasterise(prof, x0 + dx / 2, y0 + dy / 2, dx, dy, nx, ny)
    ctri, _ = _rasterise(prof, x0, y0, dx, dy, nx + 1, ny + 1)
    inside = tri >= 0
    cin = (ctri >= 0).reshape(ny + 1, nx + 1)
    touching = (cin[:-1, :-1] | cin[1:, :-1] | cin[:-1, 1:] | cin[1:, 1:]).ravel() & ~inside
    nodes = T[np.where(inside, tri, 0)]
    imgs = {}
    for k in IMAGE_FIELDS:
        v = np.asarray(getattr(prof, k), float)
        imgs[k] = np.where(inside, np.sum(v[nodes] * lam, axis=1), np.nan)
    if np.any(touching):
        xc = x0 + (np.arange(nx) + 0.5) * dx
        yc = y0 + (np.arange(ny) + 0.5) * dy
        Xc, Yc = np.meshgrid(xc, yc)
        q = np.stack([Xc.ravel()[touching], Yc.ravel()[touching]], 1)
        _, j = cKDTree(np.stack([x, y], 1)).query(q)
        for k in IMAGE_FIELDS:
            imgs[k][touching] = np.asarray(getattr(prof, k), float)[j]
    # magnitude images for the log colour scale: the largest |value| of the
    # mesh nodes inside each pixel (a double layer thinner than a pixel still
    # shows at the wall), else the interpolated value
    ix = np.clip(((x - x0) / dx).astype(np.int64), 0, nx - 1)
    iy = np.clip(((y - y0) / dy).astype(np.int64), 0, ny - 1)
    flat = iy * nx + ix
    peaks = {}
    for k in IMAGE_FIELDS:
        pk = np.abs(imgs[k])
        node_max = np.zeros(nx * ny)
        np.maximum.at(node_max, flat, np.abs(np.asarray(getattr(prof, k), float)))
        peaks[k] = np.where(np.isfinite(pk), np.maximum(pk, node_max), np.nan).reshape(ny, nx)
    normal = prof.wall_normal(n=50)
    centre = _centreline(prof)
    return dict(x0=x0, y0=y0, width=W, height=H, nx=nx, ny=ny,
                **{k: imgs[k].reshape(ny, nx) for k in IMAGE_FIELDS},
                magnitude={k: peaks[k] for k in IMAGE_FIELDS},
                normal=(np.asarray(normal["x"], dtype=float), np.asarray(normal["y"], dtype=float)),
                centre=dict((k, np.asarray(v, dtype=float)) for k, v in centre.items()))


#: Relative error above which a forced model is said to be outside its range
#: (the tolerance ``auto`` uses by default in ``ek.solve``).
MODEL_TOL = 0.01


@dataclass
class Accuracy:
    """How far the shown model is from the full (pb) model, in words and numbers."""

    error: float            # relative error [-] (measured against pb, or estimated)
    how: str                # "measured against pb" | "estimated against pb" | "pb numerical"
    forced: bool            # the user forced a simplified model
    out_of_range: str = ""  # a warning when a forced model misses MODEL_TOL


@dataclass
class Explored:
    """Everything the explorer shows for one state."""

    result: object                  # ek.solve at the chosen model
    reference: object               # pb result (1D shapes), else the shown result
    thin: object                    # ek.solve at model="thin" (for the verdict)
    profiles: object                # result.profiles(G, E)
    pressure_gradient: float        # -dp/dx [Pa/m] used for the profiles
    field: float                    # E [V/m] used for the profiles
    matrix: np.ndarray              # (2, 2) SI per unit area
    conductances: dict              # whole channel, SI
    model: str
    verdict: str
    accuracy: Accuracy | None = None
    problems: list = field(default_factory=list)   # impossible values, in words
    derived: list = field(default_factory=list)   # (name, value text, meaning)
    curves: Curves | None = None
    images: dict | None = None
    wall: dict | None = None        # zeta [V], sigma [C/m^2], charged fraction, error
    notes: list = field(default_factory=list)     # crowding/accuracy warnings, in words


def wall_state(r, ref, acc):
    """The wall as solved: ζ [V], σ [C/m²], the charged fraction of the sites
    [-] (NaN unless the charge follows the chemistry) and their relative
    error: the model's error estimate against pb (``acc``), and where a pb
    reference was solved, the larger of that and the shown values' own
    difference from it."""
    vals = {"zeta": scalar(r.wall_potential), "sigma": scalar(r.wall_charge),
            "fraction": scalar(r.charged_fraction)}
    err = acc.error if acc is not None else float("nan")
    if ref is not None and ref is not r and text(ref.model) == "pb":
        refs = {"zeta": scalar(ref.wall_potential), "sigma": scalar(ref.wall_charge),
                "fraction": scalar(ref.charged_fraction)}
        for k, v in vals.items():
            if np.isfinite(v) and np.isfinite(refs[k]) and refs[k] != 0.0:
                err = max(err, abs(v - refs[k]) / abs(refs[k]))
    return dict(vals, error=err, how=acc.how if acc is not None else "")


def matrix_error(m, ref):
    """Largest relative difference of two coupling matrices [-].

    Diagonal entries relative to themselves; off-diagonals relative to
    sqrt(L11 L22) of the reference, so that an uncharged wall (zero
    off-diagonals) still gives a finite, meaningful figure.
    """
    m = np.asarray(m, dtype=float).reshape(2, 2)
    ref = np.asarray(ref, dtype=float).reshape(2, 2)
    scale = np.array([[abs(ref[0, 0]), np.sqrt(abs(ref[0, 0] * ref[1, 1]))],
                      [np.sqrt(abs(ref[0, 0] * ref[1, 1])), abs(ref[1, 1])]])
    return float(np.max(np.abs(m - ref) / scale))


def estimated_error(r, state):
    """The a-priori error estimate of the thin or dh model at this point [-]
    (``ek.estimated_model_errors``), for results whose own estimate is 0."""
    el = state.electrolyte()
    z = np.asarray(el.valences, dtype=float)
    c = np.asarray(el.concentrations, dtype=float).reshape(len(z))
    VT = constants.k * scalar(r.temperature) / constants.e
    geometry = {"slit": "slit", "tube": "tube"}.get(ek.channels.SHAPES[state.shape].kind,
                                                   "section")
    phi = scalar(r.wall_potential) / VT
    # a regulated wall's estimate compares dh's potential with pb's: here only the
    # shown model's is known, so the result's own estimate (which has both) rules
    est = ek.estimated_model_errors(scalar(r.kappa_size), phi,
                                    valences=tuple(int(v) for v in z), geometry=geometry,
                                    condition={"zeta": "potential", "charge": "charge"}.get(
                                        state.wall_mode, "regulated"),
                                    weights=(c / np.sum(z**2 * c)).reshape(-1),
                                    phi_thin=phi, phi_dh=phi)
    return float(np.asarray(est[text(r.model)]).reshape(-1)[0])


def accuracy(r, ref, state):
    """Error of the shown model against pb: measured when ``ref`` is a pb
    result (1D shapes), else estimated; never a model compared with itself."""
    model = text(r.model)
    forced = state.model in ("thin", "dh")
    if model == "pb":
        return Accuracy(scalar(r.error_estimate), "numerical estimate of pb", forced)
    if ref is not None and text(ref.model) == "pb":
        err, how = matrix_error(r.matrix, ref.matrix), "measured against pb"
    else:
        own = scalar(r.error_estimate)
        err, how = max(own, estimated_error(r, state)), "estimated against pb"
    acc = Accuracy(err, how, forced)
    if forced and err > MODEL_TOL:
        acc.out_of_range = (
            f"The {model} model is outside its range here (κ·a = {num(scalar(r.kappa_size))}, "
            f"|ζ| = {num(abs(scalar(r.wall_potential)) * 1e3)} mV): its error against pb is "
            f"{U.percent(err, 2)}, above {U.percent(MODEL_TOL, 2)}. Use pb or auto.")
    return acc


def impossible(r):
    """Impossible derived values of a result, in words (empty when all is well):
    a counter-ion share outside 0-100 %, a coupling degree or an efficiency
    above 100 %."""
    out = []
    share = scalar(r.counterion_share)
    q2 = scalar(r.coupling_degree)
    eff = scalar(r.max_efficiency)
    if not 0.0 <= share <= 1.0 + 1e-9:
        out.append("a counter-ion share outside 0–100 %")
    if q2 > 1.0 + 1e-9 or q2 < -1e-9:
        out.append("a coupling degree q² outside 0–1")
    if eff > 1.0 + 1e-9:
        out.append("an efficiency above 100 %")
    return out


#: library warnings the screens show in words (the range and impossible-result
#: warnings are shown through the accuracy and the checks of the result)
NOTED_WARNINGS = ("CrowdingWarning", "AccuracyWarning")


def noted_solve(state, model=None, **kw):
    """``state.solve`` whose crowding and accuracy warnings are returned as
    sentences for the screen, (result, notes), instead of being printed into
    the notebook."""
    with _warnings.catch_warnings(record=True) as caught:
        _warnings.simplefilter("always")
        r = state.solve(model, **kw)
    notes = []
    for w in caught:
        text_ = str(w.message)
        if type(w.message).__name__ in NOTED_WARNINGS and text_ not in notes:
            notes.append(text_)
    return r, notes


def _quiet_solve(state, model, **kw):
    """A comparison solve (a model on purpose outside its range, for the
    maps and the verdict): its range warnings are what the screen shows."""
    with _warnings.catch_warnings():
        for w in (ek.transport.ModelRangeWarning, ek.transport.ImpossibleResultWarning,
                  ek.transport.CrowdingWarning):
            _warnings.simplefilter("ignore", w)
        return state.solve(model, **kw)


def _comparison_eo(state, model, kw):
    """Electro-osmotic coefficient of ``model`` at the map's points; NaN (grey)
    where solve refuses a point (a charge whose linear dh wall potential leaves
    the range of every model)."""
    try:
        return np.asarray(_quiet_solve(state, model, **kw).electroosmotic, dtype=float)
    except ValueError:
        pass
    n = np.size(next(iter(kw.values())))
    out = np.full(n, np.nan)
    for k in range(n):
        one = {key: np.asarray(v).reshape(-1)[k] if np.size(v) == n else v
               for key, v in kw.items()}
        try:
            out[k] = float(_quiet_solve(state, model, **one).electroosmotic)
        except ValueError:
            continue
    return out


def explore_matrix(state):
    """The coupling matrix and everything read from it (verdict, accuracy,
    derived quantities): the fast first stage of an update. Raises ValueError
    for bad inputs."""
    r, notes = noted_solve(state)
    model = text(r.model)
    if state.is_section:
        ref = None          # a 2D pb solve per update would be slow: estimates instead
    else:
        ref = r if model == "pb" else noted_solve(state, "pb")[0]
    thin = r if model == "thin" else _quiet_solve(state, "thin")
    G = state.pressure_drop / state.length
    E = state.voltage / state.length
    matrix = np.asarray(r.matrix, dtype=float).reshape(2, 2)
    cond = {k: scalar(v) for k, v in r.conductances(state.length).items()}
    acc = accuracy(r, ref, state)
    problems = impossible(r)
    return Explored(result=r, reference=ref if ref is not None else r, thin=thin,
                    profiles=None, pressure_gradient=G, field=E,
                    matrix=matrix, conductances=cond, model=model,
                    verdict=verdict(r, thin, state, ref, acc), accuracy=acc,
                    problems=problems, derived=derived(r, state, problems),
                    wall=wall_state(r, ref, acc), notes=notes)


def explore_fields(ex):
    """The second stage: profiles across the section, their curves and, for a
    2D section, the field images. Fills ``ex`` in place and returns it."""
    prof = ex.result.profiles(pressure_gradient=ex.pressure_gradient, field=ex.field)
    ex.profiles = prof
    ex.curves = curves(prof)
    ex.images = field_images(prof)
    return ex


def explore(state):
    """Both stages at the state's inputs; raises ValueError for bad inputs."""
    return explore_fields(explore_matrix(state))


def eo_overestimate(r, thin):
    """Slip-model electroosmotic coefficient over the given model's [-]
    (NaN for an uncharged wall, where both are zero)."""
    a, b = scalar(thin.electroosmotic), scalar(r.electroosmotic)
    return a / b if b != 0.0 else float("nan")


def verdict(r, thin, state, ref=None, acc=None):
    """The regime in words, from the full model's numbers where there is one:
    pb for slits and tubes; for a 2D section the shown model (pb or dh), and
    the thin model's estimate when thin itself is shown."""
    base = ref if ref is not None else r
    ka = scalar(base.kappa_size)
    if ka < 1:
        parts = [f"double layers overlap: κ·a = {num(ka, 2)}"]
    elif ka < 10:
        parts = [f"double layers are thick: κ·a = {num(ka, 2)}"]
    else:
        parts = [f"thin double layers: κ·a = {num(ka)}"]
    VT = constants.k * scalar(base.temperature) / constants.e
    zeta = scalar(base.wall_potential)
    if zeta == 0.0:
        parts.append("uncharged wall (ζ = 0 mV): no electro-osmosis, no streaming current, "
                     "no surface conduction")
        return "; ".join(parts)
    if text(base.model) == "thin":
        err = acc.error if acc is not None else float("nan")
        parts.append(f"the slip (Helmholtz–Smoluchowski) model is the one shown; its "
                     f"estimated error against pb is {U.percent(err, 2)}")
    else:
        ratio = eo_overestimate(base, thin)
        if abs(ratio - 1.0) > 0.05:
            word = "overestimates" if ratio > 1 else "underestimates"
            parts.append(f"the slip (Helmholtz–Smoluchowski) model {word} electro-osmotic "
                         f"flow by {num(ratio, 2)}× (against {text(base.model)})")
        else:
            parts.append("the slip (Helmholtz–Smoluchowski) model holds within 5 % "
                         f"(against {text(base.model)})")
    du = scalar(base.dukhin)
    if du > 1:
        parts.append(f"surface conduction dominates (Du = {num(du, 2)})")
    elif du > 0.1:
        parts.append(f"surface conduction matters (Du = {num(du, 2)})")
    share = scalar(base.counterion_share)
    if 0.8 < share <= 1.0:
        parts.append(f"perm-selective: counter-ions carry {share:.0%} of the current")
    phi = abs(zeta) / VT
    if phi > 1:
        parts.append(f"|ζ| = {num(phi, 2)} kT/e, beyond the linear (Debye–Hückel) range")
    return "; ".join(parts)


def _no_noise(x, floor=1e-12):
    """Round-off of a quantity that is exactly zero in theory (e.g. Du at ζ = 0)."""
    return 0.0 if abs(x) < floor else x


def derived(r, state, problems=()):
    """(name, value with unit, one-line meaning) for each derived quantity.
    Impossible values (a share or an efficiency above 100 %) are not shown as
    numbers: the row says why."""
    L = state.length
    cond = r.conductances(L)
    model = text(r.model)

    def checked(value_text, bad, limits):
        if bad:
            return f"not shown: {limits}, impossible ({model} model here)"
        return value_text

    share = scalar(r.counterion_share)
    q2 = scalar(r.coupling_degree)
    eff = scalar(r.max_efficiency)
    q2_bad = q2 > 1.0 + 1e-9 or q2 < -1e-9
    rows = [
        ("electroosmotic mobility", U.mobility(scalar(r.electroosmotic_mobility)),
         "mean flow speed per unit applied field"),
        ("streaming potential coefficient",
         U.voltage(scalar(r.streaming_potential_coefficient) * 1e3) + " per kPa",
         "open-circuit voltage built up per unit pressure drop"),
        ("streaming current (one channel)",
         U.current(scalar(cond["current_per_pressure"]) * 1e3) + " per kPa",
         "short-circuit current per unit pressure drop"),
        ("electroviscous ratio", checked(num(scalar(r.electroviscous_ratio), 6), q2_bad,
                                         "below 1"),
         "apparent over true viscosity: the streaming potential slows pressure flow"),
        ("Dukhin number Du", num(_no_noise(scalar(r.dukhin))),
         "surface over bulk conduction"),
        ("coupling degree q²", checked(num(q2), q2_bad, "outside 0–1"),
         "0: flow and current independent; 1: perfectly coupled"),
        ("maximum efficiency", checked(U.percent(eff), eff > 1.0 + 1e-9 or q2_bad, "above 100 %"),
         "best electrical-to-mechanical (or back) energy conversion"),
        ("counter-ion share", checked(U.percent(share), not 0.0 <= share <= 1.0 + 1e-9,
                                      "outside 0–100 %"),
         "fraction of the conduction current carried by counter-ions"),
        ("Debye length λ_D", U.length(scalar(r.debye_length)),
         "thickness of the diffuse charge layer"),
        ("κ·a", num(scalar(r.kappa_size)),
         "channel half-size a over the Debye length"),
        ("wall potential ζ", U.potential(scalar(r.wall_potential)),
         "potential at the shear plane"),
        ("wall charge σ", U.charge_density(scalar(r.wall_charge)),
         "surface charge balancing the diffuse layer"),
        *([("charged sites", U.percent(scalar(r.charged_fraction)),
            "fraction of the wall's sites that carry a charge at this pH and salt")]
          if np.isfinite(scalar(r.charged_fraction)) else []),
        ("bulk conductivity", U.conductivity(scalar(r.bulk_conductivity)),
         "conductivity of the reservoir electrolyte"),
        ("reciprocity residual", num(scalar(r.reciprocity_residual), 2),
         "mismatch of streaming and electroosmotic coefficients (Onsager check)"),
    ]
    return rows


#: The matrix entries in row order, by their result names.
_MATRIX_NAMES = ("hydraulic", "electroosmotic", "streaming", "conductive")


def matrix_csv(ex, state):
    """The matrix per area and the whole-channel figures as CSV text (SI)."""
    m = ex.matrix
    rows = [
        "quantity,value,unit",
    ]
    for (i, j), name in zip(((0, 0), (0, 1), (1, 0), (1, 1)), _MATRIX_NAMES):
        rows.append(f"L{i + 1}{j + 1} {name},{float(m[i, j])!r},{RESULT_UNITS[name]}")
    rows.append(f"channel length,{float(state.length)!r},m")
    rows += [f"{k},{float(v)!r},{CONDUCTANCE_UNITS.get(k, '')}"
             for k, v in ex.conductances.items()]
    rows.append(f"model,{ex.model},")
    rows.append(f"reciprocity residual,{scalar(ex.result.reciprocity_residual)!r},-")
    return "\n".join(rows) + "\n"


def profiles_csv(ex):
    """The profiles as CSV text (SI units in the column names)."""
    frame = ex.profiles.to_frame()
    buf = io.StringIO()
    frame.to_csv(buf, index=False)
    return buf.getvalue()


# ---------------------------------------------------------------------------
# regime maps
# ---------------------------------------------------------------------------
#: colour layers of the regime maps: key -> (title, colour scale, low, high)
LAYERS = {
    "eo_fraction": ("electroosmotic coefficient / slip value [-]", "linear", 0.0, 1.0),
    "thin_error": ("relative error of the thin (slip) model vs pb, electroosmotic [-]",
                   "log", 1e-4, 10.0),
    "dh_error": ("relative error of the Debye–Hückel model vs pb, electroosmotic [-]",
                 "log", 1e-4, 10.0),
    "dukhin": ("Dukhin number Du [-]", "log", 1e-3, 1e3),
    "counterion_share": ("counter-ion share of the conduction current [-]", "linear", 0.5, 1.0),
}
#: kappa*half-size range the solver accepts (ek.solve raises outside it)
KAPPA_SIZE_RANGE = (1e-3, 1e5)
#: contour levels of kappa*half-size
KAPPA_LEVELS = (1.0, 10.0, 100.0)


def _edges_log(lo, hi, n):
    e = np.logspace(np.log10(lo), np.log10(hi), n + 1)
    return e[:-1], e[1:], np.sqrt(e[:-1] * e[1:])


def _edges_lin(lo, hi, n):
    e = np.linspace(lo, hi, n + 1)
    return e[:-1], e[1:], 0.5 * (e[:-1] + e[1:])


def half_size_ratio(state):
    """Half-size over the size slider's parameter for the current shape [-]."""
    ch = state.channel()
    return scalar(ch.half_size) / state.size


def map_proxy(state):
    """The state whose channel the maps solve, and the factor from the state's
    size to that channel's size. A 2D section is mapped as the slit of the same
    half-size: one 2D solve per pixel would take minutes."""
    if not state.is_section:
        return state, 1.0
    ratio = half_size_ratio(state)
    proxy = state.copy()
    proxy.shape = "Slit"
    return proxy, 2.0 * ratio


def _layers(state, concentration, size, zeta=None):
    """Every colour layer at flat arrays of points: one batch solve per model."""
    state, factor = map_proxy(state)
    kw = dict(concentration=concentration, size=size * factor)
    if zeta is not None:
        kw["zeta"] = zeta
    pb = _quiet_solve(state, "pb", **kw)
    thin = _comparison_eo(state, "thin", kw)
    dh = _comparison_eo(state, "dh", kw)
    ref = np.asarray(pb.electroosmotic, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):   # an uncharged wall: NaN, grey
        layers = {
            "eo_fraction": ref / thin,
            "thin_error": np.abs(thin - ref) / np.abs(ref),
            "dh_error": np.abs(dh - ref) / np.abs(ref),
        }
    return {
        **layers,
        "dukhin": np.asarray(pb.dukhin, dtype=float),
        "counterion_share": np.asarray(pb.counterion_share, dtype=float),
        "kappa_size": np.asarray(pb.kappa_size, dtype=float),
    }


def map_size(state, n=36):
    """Map over ionic strength [mol/m^3] x channel size [m] at the state's wall.

    Returns a dict of flat arrays over the valid cells (cell edges and
    centres, each layer), the kappa*size contour lines and the operating point.
    """
    from .state import CONCENTRATION_RANGE, SIZE_RANGE
    i0, i1, ic = _edges_log(CONCENTRATION_RANGE[0], CONCENTRATION_RANGE[1], n)
    s0, s1, sc = _edges_log(SIZE_RANGE[0], SIZE_RANGE[1], n)
    # the axis is the real ionic strength (buffer, titrant and carbonate ions
    # included): the salt that reaches it, NaN (left out) below the buffer's own
    salt = state.salt_for_ionic_strength(ic)
    I, S = np.meshgrid(ic, sc, indexing="ij")
    C = np.broadcast_to(salt[:, None], I.shape)
    lam = ek.debye_length(I, state.temperature)
    ratio = half_size_ratio(state)
    ka = ratio * S / lam
    ok = (ka >= KAPPA_SIZE_RANGE[0] * 1.01) & (ka <= KAPPA_SIZE_RANGE[1] * 0.99)
    ok &= np.isfinite(C)
    layers = _layers(state, C[ok], S[ok])
    ii, ss = np.nonzero(ok)
    out = dict(left=i0[ii], right=i1[ii], bottom=s0[ss], top=s1[ss], x=ic[ii], y=sc[ss],
               **layers)
    # contours kappa*half-size = level: size = level * lambda_D / ratio
    Ic = np.logspace(np.log10(CONCENTRATION_RANGE[0]), np.log10(CONCENTRATION_RANGE[1]), 60)
    lam_c = np.asarray(ek.debye_length(Ic, state.temperature), dtype=float)
    contours = {lev: (Ic, lev * lam_c / ratio) for lev in KAPPA_LEVELS}
    point = (float(state.ionic_strength()), state.size)
    return {"cells": out, "contours": contours, "point": point, "n_valid": int(ok.sum()),
            "n_cells": n * n, "floor": ionic_strength_floor(state)}


def ionic_strength_floor(state, pH=None):
    """Ionic strength [mol/m^3] of the electrolyte with (almost) no salt: the
    buffer's or the carbonate's own; 0 for a salt alone."""
    if state.pure_salt:
        return 0.0
    return np.asarray(state.ionic_strength(state.SALT_GRID[0], pH), dtype=float)


def map_kappa_zeta(state, n=36, phi_max=8.0):
    """Map over kappa*half-size x dimensionless wall potential e|zeta|/kT.

    The salt concentration is the state's; the size and zeta vary. The sign
    of zeta is the state's (or of the computed wall potential for a
    constant-charge wall).
    """
    k0, k1, kc = _edges_log(0.1, 1000.0, n)
    p0, p1, pc = _edges_lin(0.0, phi_max, n)
    pc = np.maximum(pc, 1e-3)
    K, P = np.meshgrid(kc, pc, indexing="ij")
    lam = scalar(state.electrolyte().debye_length)
    ratio = half_size_ratio(state)
    VT = constants.k * state.temperature / constants.e
    here = state.solve("thin" if state.wall_mode == "zeta" else state.model)
    sign = -1.0 if scalar(here.wall_potential) <= 0 else 1.0
    size = K * lam / ratio
    ok = (size >= ek.channels.SIZE_MIN * 1.001) & (size <= ek.channels.SIZE_MAX * 0.999)
    layers = _layers(state, state.concentration, size[ok], zeta=sign * P[ok] * VT)
    kk, pp = np.nonzero(ok)
    out = dict(left=k0[kk], right=k1[kk], bottom=p0[pp], top=p1[pp], x=kc[kk], y=pc[pp],
               **layers)
    point = (scalar(here.kappa_size), abs(scalar(here.wall_potential)) / VT)
    return {"cells": out, "point": point, "debye_length": lam, "ratio": ratio,
            "sign": sign, "thermal_voltage": VT, "n_valid": int(ok.sum()), "n_cells": n * n}


#: colour layers of the pH map: key -> (title, unit on screen, factor from SI)
PH_LAYERS = {
    "zeta": ("wall potential ζ", "mV", 1e3),
    "sigma": ("wall charge σ", "mC/m²", 1e3),
    "charged": ("charged sites", "%", 100.0),
    "mobility": ("electro-osmotic mobility", "µm·cm/(V·s)", U.MOBILITY_TO_UM_CM),
    "conductivity": ("channel conductivity L22", "mS/cm", U.S_PER_M_TO_MS_PER_CM),
}
#: pH range of the pH map without a buffer
PH_MAP_RANGE = (2.0, 12.0)
#: Largest share of a pH-map cell's ionic strength that the (not modelled) ions
#: of the acid or base setting an unbuffered pH may carry [-]
ACID_BASE_SHARE = 0.1


def acid_base_ionic_strength(pH):
    """Ionic strength [mol/m^3] the strong acid (HCl) or base (KOH) brings that
    sets an unbuffered solution to ``pH`` at 25 °C, ideal: [H+] = 10^-pH mol/L
    with its anion, or [OH-] = 10^(pH-14) mol/L with its cation (pK_w 14,
    common practice); 1 mol/L = 1000 mol/m^3."""
    pH = np.asarray(pH, dtype=float)
    return 1e3 * (10.0 ** -pH + 10.0 ** (pH - 14.0))


def map_pH(state, n_pH=24, n_I=30):
    """Map of a material wall over pH x ionic strength at the state's channel.

    One batched ``ek.solve`` at the state's model over every cell. With a
    buffer, each cell is the buffer re-titrated to that pH (its useful range
    only) with the salt that brings the ionic strength to the cell's value
    (buffer ions included). Without a buffer the pH is what the wall's sites
    see and the ions are the salt's: the acid or base that would set that pH
    is not added, so cells where its ions would pass a tenth of the ionic
    strength (``ACID_BASE_SHARE``) are left out. A 2D section is mapped as the slit of the same half-size
    (:func:`map_proxy`). Returns None unless the wall is a material.
    """
    from .state import CONCENTRATION_RANGE
    if state.wall_mode != "material":
        return None
    size = state.size
    state, factor = map_proxy(state)
    rng = state.buffer_pH_range() or PH_MAP_RANGE
    h0, h1, hc = _edges_lin(rng[0], rng[1], n_pH)
    i0, i1, ic = _edges_log(CONCENTRATION_RANGE[0], CONCENTRATION_RANGE[1], n_I)
    I, H = np.meshgrid(ic, hc, indexing="ij")
    C = state.salt_for_ionic_strength(I, H if state.buffer else None)
    lam = ek.debye_length(I, state.temperature)
    ka = half_size_ratio(state) * size * factor / lam
    ok = np.isfinite(C) & (ka >= KAPPA_SIZE_RANGE[0] * 1.01) & (ka <= KAPPA_SIZE_RANGE[1] * 0.99)
    if not state.buffer:
        # the strong acid or base that sets the pH brings H+ or OH- of about
        # 10^-pH or 10^(pH-14) mol/L (ideal): cells where they would exceed a
        # tenth of the ionic strength are left out (their ions are not modelled)
        ok &= acid_base_ionic_strength(H) <= ACID_BASE_SHARE * I
    kw = dict(concentration=C[ok], size=size * factor)
    if state.buffer:
        kw["electrolyte_pH"] = H[ok]      # the buffer re-titrated; the wall sees its pH
    else:
        kw["pH"] = H[ok]
    vals = _pH_layers(state, kw)
    ii, hh = np.nonzero(ok)
    cells = dict(left=i0[ii], right=i1[ii], bottom=h0[hh], top=h1[hh], x=ic[ii], y=hc[hh],
                 **vals)
    point = (float(state.ionic_strength()), state.wall_pH())
    return {"cells": cells, "point": point, "n_valid": int(ok.sum()), "n_cells": n_pH * n_I,
            "pH_range": rng, "floor": ionic_strength_floor(state)}


def _pH_values(r):
    return {"zeta": np.asarray(r.wall_potential, dtype=float),
            "sigma": np.asarray(r.wall_charge, dtype=float),
            "charged": np.asarray(r.charged_fraction, dtype=float),
            "mobility": np.asarray(r.electroosmotic_mobility, dtype=float),
            "conductivity": np.asarray(r.conductive, dtype=float),
            "ionic_strength": np.asarray(r.electrolyte.ionic_strength, dtype=float)
            * np.ones_like(np.asarray(r.wall_potential, dtype=float)),
            "model": np.asarray(r.model).astype(str)}


def _pH_layers(state, kw):
    """The pH map's values at flat arrays of cells: one solve; if the batch is
    refused (a cell beyond the solver range), cell by cell with NaN (grey)
    where refused."""
    try:
        return _pH_values(_quiet_solve(state, None, **kw))
    except ValueError:
        pass
    n = np.size(kw["concentration"])
    out = {k: np.full(n, np.nan) for k in PH_LAYERS}
    out["ionic_strength"] = np.full(n, np.nan)
    out["model"] = np.full(n, "none", dtype=object)
    for k in range(n):
        one = {key: (np.asarray(v).reshape(-1)[k] if np.size(v) == n else v)
               for key, v in kw.items()}
        try:
            vals = _pH_values(_quiet_solve(state, None, **one))
        except ValueError:
            continue
        for key in out:
            out[key][k] = np.asarray(vals[key]).reshape(-1)[0]
    return out


# ---------------------------------------------------------------------------
# device calculator
# ---------------------------------------------------------------------------
@dataclass
class Device:
    """Whole-device figures (``channels`` identical channels in parallel) at the
    state's length, voltage and pressure drop, SI units."""

    result: object
    channels: int
    conductances: dict            # whole device (all channels), SI
    flow: float                   # Q [m^3/s]
    current: float                # I [A]
    power: float                  # V I [W]
    stall_pressure: float         # [Pa]
    free_flow: float              # [m^3/s]
    streaming_voltage: float      # open-circuit voltage at the pressure drop [V]
    streaming_current: float      # short-circuit current at the pressure drop [A]
    max_efficiency: float         # [-]
    load: np.ndarray              # load resistances [ohm]
    load_power: np.ndarray        # [W]
    load_efficiency: np.ndarray   # [-]
    best_load: float              # load of maximum efficiency [ohm]
    problems: list = field(default_factory=list)   # impossible values, in words
    warnings: list = field(default_factory=list)   # ratings exceeded, in words
    accuracy: Accuracy | None = None
    notes: list = field(default_factory=list)      # crowding/accuracy warnings, in words


def device(state, n_load=121):
    """Flow, current and power of the device; pump and generator curves.

    The device is ``state.channels`` identical channels in parallel, so every
    conductance is N times one channel's (``Result.conductances``):
    Q = a dp + b V, I = c dp + g V. Generator: the pressure drop drives the
    device into a load R; the current I = c dp + g V returns through R, so
    V = -c dp R / (1 + g R), load power V^2/R and efficiency V^2/R / (Q dp).
    """
    r, notes = noted_solve(state)
    N = int(state.channels)
    c = {k: N * scalar(v) for k, v in r.conductances(state.length).items()}
    a, b, cc, g = (c["flow_per_pressure"], c["flow_per_volt"], c["current_per_pressure"],
                   c["conductance"])
    dp, V = state.pressure_drop, state.voltage
    Q = a * dp + b * V
    I = cc * dp + g * V
    stall = b * V / a          # back-pressure at which Q = 0 [Pa]
    free = b * V               # flow at zero back-pressure [m^3/s]
    Rc = 1.0 / g
    R = Rc * np.logspace(-3, 3, n_load)
    Vl = -cc * dp * R / (1.0 + g * R)
    Pl = Vl**2 / R
    Ql = a * dp + b * Vl
    with np.errstate(divide="ignore", invalid="ignore"):
        eff = np.where(Ql * dp > 0, Pl / (Ql * dp), 0.0)
    q2 = scalar(r.coupling_degree)
    best = Rc / np.sqrt(max(1.0 - q2, 1e-300))
    problems = impossible(r)
    if np.any(eff > 1.0 + 1e-9) and "an efficiency above 100 %" not in problems:
        problems.append("an efficiency above 100 %")
    warnings = []
    if abs(V) > state.max_voltage:
        warnings.append(f"the voltage {U.voltage(V)} is above the maximum you set, "
                        f"{U.voltage(state.max_voltage)}")
    if abs(dp) > state.max_pressure:
        warnings.append(f"the pressure drop {U.pressure(dp)} is above the maximum you set, "
                        f"{U.pressure(state.max_pressure)}")
    if abs(stall) > state.max_pressure:
        warnings.append(f"a closed outlet would build {U.pressure(abs(stall))}, above the "
                        f"maximum pressure {U.pressure(state.max_pressure)}: keep the outlet "
                        "open or lower the voltage")
    if state.is_section or text(r.model) == "pb":
        ref = None
    else:
        ref = noted_solve(state, "pb")[0]
    acc = accuracy(r, ref, state)
    return Device(result=r, channels=N, conductances=c, flow=Q, current=I, power=V * I,
                  accuracy=acc,
                  stall_pressure=stall, free_flow=free, streaming_voltage=-cc * dp / g,
                  streaming_current=cc * dp, max_efficiency=scalar(r.max_efficiency),
                  load=R, load_power=Pl, load_efficiency=eff, best_load=best,
                  problems=problems, warnings=warnings, notes=notes)
