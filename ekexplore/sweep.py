"""Parameter sweeps: a grid or a table of designs, evaluated in chunks, on any executor.

The core stays numpy + scipy: pandas (for the returned table), tqdm (the
progress bar) and dask (a cluster) are optional and imported only here, when
a sweep runs.
"""
from __future__ import annotations

import itertools

import numpy as np

from ._validate import check_choice, check_scalar
from .channels import SHAPES
from .electrolyte import SALTS, Electrolyte
from .transport import MODEL_CHOICES, solve
from .wall import Wall

__all__ = ["sweep", "design_table"]

_ELECTROLYTE_KEYS = ("concentration", "temperature")
_WALL_KEYS = ("zeta", "charge_density", "stern_conductance")
_RESULT_KEYS = ("hydraulic", "electroosmotic", "streaming", "conductive",
                "reciprocity_residual", "streaming_potential_coefficient",
                "electroviscous_ratio", "dukhin", "coupling_degree", "max_efficiency",
                "counterion_share", "kappa_size", "debye_length", "wall_potential",
                "wall_charge", "bulk_conductivity", "error_estimate", "model")


def design_table(grid=None, table=None, **fixed):
    """The flat list of parameter combinations, as a dict of equal-length arrays.

    Parameters
    ----------
    grid : dict, optional
        name -> sequence; every combination (Cartesian product) is a design.
    table : dict or pandas.DataFrame, optional
        name -> equal-length columns; each row is a design (combined with
        ``grid`` as a product when both are given).
    **fixed
        name -> scalar, the same in every design.

    Examples
    --------
    >>> t = design_table(grid={"gap": [1e-7, 1e-6], "concentration": [1.0, 10.0]}, zeta=-0.05)
    >>> len(t["gap"]), sorted(t)
    (4, ['concentration', 'gap', 'zeta'])
    """
    cols = {}
    rows = 1
    if table is not None:
        tcols = {k: np.asarray(table[k]) for k in table.keys()}
        lens = {len(v) for v in tcols.values()}
        if len(lens) != 1:
            raise ValueError(f"table: columns must have equal length, got lengths {sorted(lens)}")
        rows = lens.pop()
        cols = tcols
    if table is not None and rows == 0:
        raise ValueError(f"table has no rows (columns {sorted(cols)}); give at least one design")
    if grid:
        names = list(grid)
        values = [np.asarray(grid[n]).ravel() for n in names]
        for n, v in zip(names, values):
            if v.size == 0:
                raise ValueError(f"grid[{n!r}] is empty; give at least one value")
        combos = list(itertools.product(range(rows), *[range(len(v)) for v in values]))
        idx = np.array(combos, dtype=int).reshape(len(combos), -1)
        cols = {k: v[idx[:, 0]] for k, v in cols.items()}
        for j, (n, v) in enumerate(zip(names, values)):
            cols[n] = v[idx[:, j + 1]]
        rows = len(combos)
    for k, v in fixed.items():
        cols[k] = np.full(rows, v)
    return cols


def _evaluate(shape_name, salt, model, tol, length, cols):
    """Solve one chunk of designs (a top-level function, so executors can pickle it)."""
    cls = SHAPES[shape_name]
    shape_args = {p: cols[p] for p in cls.parameters if p in cols}
    channel = cls(**shape_args)
    e_kw = {"temperature": cols["temperature"]} if "temperature" in cols else {}
    electrolyte = Electrolyte.salt(salt, cols["concentration"], **e_kw)
    w_kw = {k: cols[k] for k in _WALL_KEYS if k in cols}
    wall = Wall(**w_kw)
    n = len(cols["concentration"])
    if channel.kind == "section":  # one 2D solve per design
        results = [solve(cls(**{k: v[i] for k, v in shape_args.items()}),
                         Electrolyte.salt(salt, cols["concentration"][i],
                                          **({"temperature": cols["temperature"][i]}
                                             if "temperature" in cols else {})),
                         Wall(**{k: v[i] for k, v in w_kw.items()}), model=model, tol=tol)
                   for i in range(n)]
        out = {k: np.array([np.asarray(getattr(r, k)).item() for r in results])
               for k in _RESULT_KEYS}
        if length is not None:
            for k in results[0].conductances(length):
                out[k] = np.array([float(r.conductances(length)[k]) for r in results])
        return out
    r = solve(channel, electrolyte, wall, model=model, tol=tol)
    out = {k: np.broadcast_to(getattr(r, k), (n,)).copy() for k in _RESULT_KEYS}
    if length is not None:
        for k, v in r.conductances(length).items():
            out[k] = np.broadcast_to(v, (n,)).copy()
    return out


def sweep(grid=None, table=None, shape="Slit", salt="KCl", model="auto", tol=0.01,
          length=None, executor=None, chunk_size=4096, progress=None, **fixed):
    """Evaluate many designs and return one tidy table.

    Parameters
    ----------
    grid, table, **fixed
        The designs, see :func:`design_table`. Names are the shape's
        parameters (e.g. ``gap``, ``diameter``, ``width``, ``depth``),
        ``concentration`` [mol/m³] (required), ``temperature`` [K], ``zeta``
        [V] or ``charge_density`` [C/m²] (one is required) and
        ``stern_conductance`` [S].
    shape : str
        A name in :data:`ekexplore.SHAPES`.
    salt : str
        A preset in :data:`ekexplore.SALTS`.
    model, tol
        As in :func:`ekexplore.solve`.
    length : float, optional
        Channel length [m]; adds the whole-channel conductances.
    executor : concurrent.futures.Executor or dask.distributed.Client, optional
        Where the chunks run; anything with ``submit(fn, *args)`` returning
        futures with ``.result()``. Default: in this process.
    chunk_size : int
        Designs per task for 1D shapes (vector calls); 2D sections go one
        design per task.
    progress : bool, optional
        Show a tqdm progress bar (default: when tqdm is installed and there
        is more than one task).

    Returns
    -------
    pandas.DataFrame
        One row per design: the inputs, then every coefficient and derived
        quantity in SI units.

    Examples
    --------
    >>> df = sweep(grid={"gap": [50e-9, 500e-9], "concentration": [1.0, 10.0]}, zeta=-0.05)
    >>> df.shape[0], bool((df["electroosmotic"] > 0).all())
    (4, True)
    """
    import pandas as pd

    check_choice("shape", shape, tuple(SHAPES))
    check_choice("salt", salt, tuple(SALTS))
    check_choice("model", model, MODEL_CHOICES)
    tol = check_scalar("tol", tol, 1e-6, 1.0)
    cols = design_table(grid, table, **fixed)
    missing = [p for p in SHAPES[shape].parameters if p not in cols]
    if missing:
        info = SHAPES[shape].parameter_info
        listed = ", ".join(f"{p!r} ({info[p].label})" if p in info else repr(p) for p in missing)
        raise ValueError(f"sweep: shape {shape!r} needs {listed} in grid, table or as a value")
    if "concentration" not in cols:
        raise ValueError("sweep: give 'concentration' [mol/m^3] in grid, table or as a value")
    if not any(k in cols for k in ("zeta", "charge_density")):
        raise ValueError("sweep: give 'zeta' [V] or 'charge_density' [C/m^2]")
    known = set(SHAPES[shape].parameters) | set(_ELECTROLYTE_KEYS) | set(_WALL_KEYS)
    unknown = sorted(set(cols) - known)
    if unknown:
        raise ValueError(f"sweep: unknown parameter(s) {unknown}; known: {sorted(known)}")
    n = len(cols["concentration"])
    step = 1 if SHAPES[shape].kind == "section" else max(1, int(chunk_size))
    bounds = [(i, min(i + step, n)) for i in range(0, n, step)]
    tasks = [{k: v[a:b] for k, v in cols.items()} for a, b in bounds]
    args = (shape, salt, model, tol, length)
    bar = None
    if progress is None:
        progress = len(tasks) > 1
    if progress:
        try:
            from tqdm.auto import tqdm
            bar = tqdm(total=n, desc="designs", unit="design")
        except ImportError:  # tqdm is optional
            bar = None
    parts = []
    if executor is None:
        for t, (a, b) in zip(tasks, bounds):
            parts.append(_evaluate(*args, t))
            if bar is not None:
                bar.update(b - a)
    else:
        futures = [executor.submit(_evaluate, *args, t) for t in tasks]
        for fut, (a, b) in zip(futures, bounds):
            parts.append(fut.result())
            if bar is not None:
                bar.update(b - a)
    if bar is not None:
        bar.close()
    out = {k: np.concatenate([p[k] for p in parts]) for k in parts[0]}
    frame = pd.DataFrame({**cols, **out})
    frame.attrs["units"] = {"hydraulic": "m^2/(Pa s)", "electroosmotic": "m^2/(V s)",
                            "streaming": "A/(Pa m)", "conductive": "S/m",
                            "streaming_potential_coefficient": "V/Pa", "debye_length": "m",
                            "wall_potential": "V", "wall_charge": "C/m^2",
                            "bulk_conductivity": "S/m"}
    return frame
