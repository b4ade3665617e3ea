"""Parameter sweeps: a grid or a table of designs, evaluated in chunks, on any executor.

A sweep keeps its work: a design that fails is recorded in the table (an
``error`` column with the message, NaN results) instead of aborting the
sweep; finished rows can be appended to a CSV file as they come in, and a
sweep resumed from that file; each design can be given a time limit.

The core stays numpy + scipy: pandas (for the returned table), tqdm (the
progress bar) and dask (a cluster) are optional and imported only here, when
a sweep runs.
"""
from __future__ import annotations

import ctypes
import hashlib
import itertools
import json
import os
import signal
import threading
import warnings
from pathlib import Path

import numpy as np

from ._validate import as_float_array, check_choice, check_integer, check_scalar
from .channels import SHAPES
from .chemistry import BUFFERS
from .electrolyte import SALTS, Electrolyte
from .models import MODEL_CHOICES
from .transport import CONDUCTANCE_UNITS, RESULT_NAMES, RESULT_UNITS, solve
from .wall import Wall

__all__ = ["sweep", "design_table", "read_sweep", "SweepError", "SweepWarning"]

_ELECTROLYTE_KEYS = ("concentration", "temperature", "pH")
_WALL_KEYS = ("zeta", "charge_density", "stern_conductance")
_RESULT_KEYS = RESULT_NAMES
#: Results added for walls whose charge follows the chemistry.
_SURFACE_KEYS = ("charged_fraction", "surface_potential")
_CONDUCTANCE_KEYS = tuple(CONDUCTANCE_UNITS)
#: First characters of the metadata line of a sweep file.
FILE_TAG = "# ekexplore sweep "
_FILE_VERSION = 1


class SweepError(ValueError):
    """A design failed in a sweep run with ``on_error="raise"``.

    ``row`` is the design's index in the design table, ``parameters`` its
    inputs (name -> value); the message ends with the original exception's
    type and message (the exception itself stays in the worker that ran it).
    """

    def __init__(self, message, row=None, parameters=None):
        super().__init__(message)
        self.row = row
        self.parameters = parameters

    def __reduce__(self):
        return (type(self), (self.args[0], self.row, self.parameters))


class SweepWarning(UserWarning):
    """Some designs of a sweep failed; their rows hold NaN and the reason."""


class _Timeout(BaseException):
    """Raised inside a design that overran its time limit (a BaseException,
    so that no ``except Exception`` in the solver swallows it)."""


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


def _solve_rows(shape_name, salt, model, tol, length, cols, surface=None):
    """Solve designs (columns of equal length) in one vector call, or one
    solve per design for 2D sections; raises on the first invalid design."""
    cls = SHAPES[shape_name]
    shape_args = {p: cols[p] for p in cls.parameters if p in cols}
    w_kw = {k: cols[k] for k in _WALL_KEYS if k in cols}
    if surface is not None:
        w_kw["surface"] = surface
    n = len(cols["concentration"])
    if cls.kind == "section":  # one 2D solve per design
        results = [solve(cls(**{k: v[i] for k, v in shape_args.items()}),
                         Electrolyte.named(salt, cols["concentration"][i],
                                           **{k: cols[k][i] for k in ("temperature", "pH")
                                              if k in cols}),
                         Wall(**{k: v[i] for k, v in w_kw.items()}), model=model, tol=tol)
                   for i in range(n)]
        rkeys = _RESULT_KEYS + (_SURFACE_KEYS if surface is not None else ())
        out = {k: np.array([np.asarray(getattr(r, k)).item() for r in results])
               for k in rkeys}
        if length is not None:
            for k in _CONDUCTANCE_KEYS:
                out[k] = np.array([float(r.conductances(length)[k]) for r in results])
        return out
    channel = cls(**shape_args)
    e_kw = {k: cols[k] for k in ("temperature", "pH") if k in cols}
    electrolyte = Electrolyte.named(salt, cols["concentration"], **e_kw)
    r = solve(channel, electrolyte, Wall(**w_kw), model=model, tol=tol)
    rkeys = _RESULT_KEYS + (_SURFACE_KEYS if surface is not None else ())
    out = {k: np.broadcast_to(getattr(r, k), (n,)).copy() for k in rkeys}
    if length is not None:
        cond = r.conductances(length)
        for k in _CONDUCTANCE_KEYS:
            out[k] = np.broadcast_to(cond[k], (n,)).copy()
    return out


def _limited(fn, seconds):
    """Run ``fn()``; raise :class:`_Timeout` once it has run ``seconds``.

    In the main thread (serial sweeps, and each worker process of a process
    pool) a SIGALRM timer interrupts the design; in any other thread (thread
    pools, dask workers) a watchdog raises the exception asynchronously in
    the running thread (``PyThreadState_SetAsyncExc``). Both take effect at
    the next Python-level step: a single long native call (one sparse
    factorisation or LAPACK call) finishes first.
    """
    if seconds is None:
        return fn()
    main = threading.current_thread() is threading.main_thread()
    if main and hasattr(signal, "setitimer"):
        def on_alarm(signum, frame):
            raise _Timeout()
        old = signal.signal(signal.SIGALRM, on_alarm)
        signal.setitimer(signal.ITIMER_REAL, seconds)
        try:
            return fn()
        finally:
            signal.setitimer(signal.ITIMER_REAL, 0)
            signal.signal(signal.SIGALRM, old)
    lock = threading.Lock()
    state = {"done": False}
    tid = threading.get_ident()

    def fire():
        with lock:
            if not state["done"]:
                ctypes.pythonapi.PyThreadState_SetAsyncExc(ctypes.c_ulong(tid),
                                                           ctypes.py_object(_Timeout))
    timer = threading.Timer(seconds, fire)
    timer.daemon = True
    timer.start()
    try:
        return fn()
    finally:
        with lock:
            state["done"] = True
        timer.cancel()


def _message(exc):
    return f"{type(exc).__name__}: {exc}"


def _evaluate(shape_name, salt, model, tol, length, cols, time_limit=None, stop_first=False,
              surface=None):
    """Solve one chunk of designs, recording each failing design's message.

    A top-level function, so that executors can pickle it. The chunk is
    solved in one vector call; if that fails, it is split in halves until the
    failing designs are isolated (the others keep their vector results). With
    a ``time_limit`` [s] per design, the chunk gets ``time_limit`` x rows and,
    if it overruns, its designs are redone one at a time with ``time_limit``
    each. Returns the result columns plus ``error`` (None where the design
    succeeded) and ``done`` (False for designs skipped after the first error
    when ``stop_first``).
    """
    n = len(cols["concentration"])
    keys = _RESULT_KEYS + (_CONDUCTANCE_KEYS if length is not None else ()) + (
        _SURFACE_KEYS if surface is not None else ())
    out = {k: np.full(n, np.nan) for k in keys}
    out["model"] = np.full(n, None, dtype=object)
    error = np.full(n, None, dtype=object)
    done = np.zeros(n, dtype=bool)

    def stopped():
        return stop_first and any(e is not None for e in error)

    def run(lo, hi, one_by_one=False):
        if stopped():
            return
        if one_by_one and hi - lo > 1:
            for i in range(lo, hi):
                run(i, i + 1)
            return
        sub = {k: v[lo:hi] for k, v in cols.items()}
        budget = None if time_limit is None else time_limit * (hi - lo)
        try:
            extra = () if surface is None else (surface,)
            res = _limited(lambda: _solve_rows(shape_name, salt, model, tol, length, sub,
                                               *extra), budget)
        except _Timeout:
            if hi - lo == 1:
                error[lo] = (f"TimeoutError: the design ran longer than time_limit = "
                             f"{time_limit:g} s and was stopped")
                done[lo] = True
            else:
                run(lo, hi, one_by_one=True)
            return
        except Exception as exc:  # noqa: BLE001 - every failure is recorded
            if hi - lo == 1:
                error[lo] = _message(exc)
                done[lo] = True
            else:
                mid = (lo + hi) // 2
                run(lo, mid)
                run(mid, hi)
            return
        for k in keys:
            out[k][lo:hi] = res[k]
        done[lo:hi] = True

    run(0, n)
    out["error"] = error
    out["done"] = done
    return out


def _as_completed(futures):
    """Futures in the order they finish (concurrent.futures or dask), else in order."""
    import concurrent.futures as cf
    if all(isinstance(f, cf.Future) for f in futures):
        return cf.as_completed(futures)
    if futures and type(futures[0]).__module__.startswith("distributed"):
        from distributed import as_completed
        return as_completed(futures)
    return iter(futures)


def _fingerprint(cols, settings):
    """sha256 of the design table (names, order, float64 values) and the settings."""
    h = hashlib.sha256(json.dumps(settings, sort_keys=True).encode())
    for k in sorted(cols):
        h.update(k.encode())
        h.update(np.ascontiguousarray(np.asarray(cols[k], dtype=float)).tobytes())
    return h.hexdigest()


def _read_file(path):
    """(metadata, DataFrame) of a sweep file; a torn last line (a write cut
    short by a crash) is dropped from the file first."""
    import io

    import pandas as pd

    data = Path(path).read_bytes()
    if data and not data.endswith(b"\n"):
        cut = data.rfind(b"\n") + 1
        with open(path, "r+b") as f:
            f.truncate(cut)
        data = data[:cut]
    text = data.decode("utf-8")
    first, _, rest = text.partition("\n")
    if not first.startswith(FILE_TAG):
        raise ValueError(f"output = {str(path)!r} is not a sweep file (its first line does "
                         f"not start with {FILE_TAG.strip()!r}); choose another file")
    meta = json.loads(first[len(FILE_TAG):])
    if not rest.strip():
        return meta, None
    # pandas < 3 reads floats round-trip only when asked; 3.x does by default
    extra = {"float_precision": "round_trip"} if int(pd.__version__.split(".")[0]) < 3 else {}
    frame = pd.read_csv(io.StringIO(rest), keep_default_na=False, na_values=[""], **extra)
    for k in ("error", "model"):
        if k in frame:
            frame[k] = frame[k].astype(object).where(frame[k].notna(), None)
    return meta, frame


def read_sweep(path):
    """Read a sweep file written by :func:`sweep` (``output=``) as a DataFrame.

    The rows come in the order they finished; the ``design`` column is the
    row's index in the design table. ``attrs["sweep"]`` holds the metadata
    line (settings, number of designs, fingerprint of the design table).

    Examples
    --------
    >>> import tempfile, os
    >>> path = os.path.join(tempfile.mkdtemp(), "run.csv")
    >>> _ = sweep(grid={"gap": [50e-9, 500e-9]}, concentration=1.0, zeta=-0.05, output=path)
    >>> read_sweep(path)[["design", "gap"]].sort_values("design").to_numpy().tolist()
    [[0.0, 5e-08], [1.0, 5e-07]]
    """
    import pandas as pd

    meta, frame = _read_file(path)
    if frame is None:
        frame = pd.DataFrame({"design": np.array([], dtype=int)})
    frame.attrs["sweep"] = meta
    return frame


def sweep(grid=None, table=None, shape="Slit", salt="KCl", model="auto", tol=0.01,
          length=None, executor=None, chunk_size=4096, progress=None, on_error="record",
          output=None, resume=False, time_limit=None, surface=None, in_memory=True, **fixed):
    """Evaluate many designs and return one tidy table.

    Parameters
    ----------
    grid, table, **fixed
        The designs, see :func:`design_table`. Names are the shape's
        parameters (e.g. ``gap``, ``diameter``, ``width``, ``depth``),
        ``concentration`` [mol/m³] (required), ``temperature`` [K], ``pH``, ``zeta``
        [V] or ``charge_density`` [C/m²] (one is required, unless ``surface``
        is given) and ``stern_conductance`` [S].
    shape : str
        A name in :data:`ekexplore.SHAPES`.
    salt : str
        A preset in :data:`ekexplore.SALTS`, or a buffer of
        :data:`ekexplore.chemistry.BUFFERS`: then ``concentration`` is the
        buffer's and ``pH`` (required) its target pH (see
        :meth:`ekexplore.Electrolyte.named`). ``pH`` may also be given with a
        salt; it is then only recorded (for pH-dependent walls).
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
    on_error : {"record", "raise"}
        ``"record"`` (default): a design that fails gets NaN results and its
        message (``"ValueError: ..."``) in the ``error`` column, the sweep
        goes on, a :class:`SweepWarning` names the failing rows and
        ``attrs["failed"]`` lists them. ``"raise"``: stop at the first
        failing design with a :class:`SweepError` naming its row and
        parameters (serial sweeps stop at the first in design order; with an
        executor, at the first failure that comes back); designs finished
        before it are kept in ``output``.
    output : str or path, optional
        A CSV file to which finished designs are appended as they come in
        (see Notes). Refused if it exists, unless ``resume``.
    in_memory : bool
        True (default): return the whole table. False (needs ``output``):
        finished designs are only written to the file and sweep returns None,
        so its memory stays bounded however many designs there are: the
        design table (8 bytes a design per input column) and one chunk
        (``benchmarks/bench_memory.py`` measures it at 1e7 designs). Read the
        file in pieces with ``pandas.read_csv(output, skiprows=1,
        chunksize=...)`` or whole with :func:`read_sweep`.
    resume : bool
        Continue the sweep in ``output``: designs already in the file are
        not computed again (failed ones included: their error is kept) and
        the returned table holds all of them. Refused if the file was
        written for another design table or other settings. If the file
        does not exist, the sweep starts from scratch.
    surface : Surface, optional
        A wall whose charge follows the chemistry (:class:`ekexplore.Surface`)
        for every design, at the electrolyte's pH (``pH`` a design parameter); the
        results then hold the solved ``wall_potential`` (zeta) and
        ``wall_charge``, and ``charged_fraction``.
    time_limit : float, optional
        Time limit per design [s], > 0. A design that overruns is stopped and
        recorded with a ``TimeoutError`` message (see Notes for how it is
        enforced).

    Returns
    -------
    pandas.DataFrame
        One row per design, indexed by its row in the design table: the
        inputs, then every coefficient and derived quantity in SI units, then
        ``error`` (None where the design succeeded).

    Notes
    -----
    **The file.** Line 1 is ``# ekexplore sweep {json}``: the settings, the
    number of designs and a sha256 fingerprint of the design table. Line 2
    is the CSV header: ``design`` (the row index), the inputs, the results,
    ``error``. Then one line per finished design, floats written to full
    precision (they read back bit for bit). Each chunk is appended in one
    write, then flushed and ``fsync``-ed: after a crash of the process or
    of the machine, every chunk reported finished is on disk; a write cut
    short leaves at most one torn last line, which ``resume`` drops (those
    designs are computed again). Read it with :func:`read_sweep`, or with
    any CSV reader skipping the first line.

    **The time limit.** Serial sweeps and process-pool workers run each
    design in the main thread of their process, under a SIGALRM timer
    (``setitimer``); thread pools and dask workers run it in a worker thread,
    and a watchdog raises the timeout asynchronously in that thread. Either
    way the design stops at its next Python-level step: a single native
    call (one sparse factorisation) finishes first, so a design can overrun
    by the length of its longest native step. A 1D chunk gets ``time_limit``
    times its number of designs and, if it overruns, is redone one design at
    a time. Nothing kills a worker process; a design stuck in one native
    call is not interrupted.

    Examples
    --------
    >>> df = sweep(grid={"gap": [50e-9, 500e-9], "concentration": [1.0, 10.0]}, zeta=-0.05)
    >>> df.shape[0], bool((df["electroosmotic"] > 0).all()), bool(df["error"].isna().all())
    (4, True, True)
    >>> import warnings
    >>> with warnings.catch_warnings():
    ...     warnings.simplefilter("ignore", SweepWarning)
    ...     df = sweep(grid={"gap": [50e-9, 2.0]}, concentration=1.0, zeta=-0.05)
    >>> df.attrs["failed"], df["error"][1][:40]
    ([1], 'ValueError: gap = 2 m is outside the all')
    """
    import pandas as pd

    check_choice("shape", shape, tuple(SHAPES))
    check_choice("salt", salt, tuple(SALTS) + tuple(BUFFERS))
    check_choice("model", model, MODEL_CHOICES)
    check_choice("on_error", on_error, ("record", "raise"))
    tol = check_scalar("tol", tol, 1e-6, 1.0)
    if length is not None:
        length = check_scalar("length", length, 0.0, None, unit="m")
        if length <= 0:
            raise ValueError(f"length = {length:g} m is outside the allowed range (0, inf] m")
    if time_limit is not None:
        time_limit = check_scalar("time_limit", time_limit, 1e-3, 1e6, unit="s")
    chunk_size = check_integer("chunk_size", chunk_size, 1, None)
    if in_memory not in (True, False):
        raise ValueError(f"in_memory must be True or False, got {in_memory!r}")
    if not in_memory and output is None:
        raise ValueError("in_memory=False needs output=<a CSV file>: the results go only there")
    cols = design_table(grid, table, **fixed)
    missing = [p for p in SHAPES[shape].parameters if p not in cols]
    if missing:
        info = SHAPES[shape].parameter_info
        listed = ", ".join(f"{p!r} ({info[p].label})" if p in info else repr(p) for p in missing)
        raise ValueError(f"sweep: shape {shape!r} needs {listed} in grid, table or as a value")
    if "concentration" not in cols:
        raise ValueError("sweep: give 'concentration' [mol/m^3] in grid, table or as a value")
    if surface is not None:
        if not hasattr(surface, "_pack"):
            raise ValueError(f"surface must be an ekexplore.Surface, got {surface!r}")
        if any(k in cols for k in ("zeta", "charge_density")):
            raise ValueError("sweep: with a surface give neither 'zeta' nor 'charge_density' "
                             "(the pH of the electrolyte, a design parameter, sets the charge)")
    elif not any(k in cols for k in ("zeta", "charge_density")):
        raise ValueError("sweep: give 'zeta' [V] or 'charge_density' [C/m^2]")
    known = set(SHAPES[shape].parameters) | set(_ELECTROLYTE_KEYS) | set(_WALL_KEYS)
    unknown = sorted(set(cols) - known)
    if unknown:
        raise ValueError(f"sweep: unknown parameter(s) {unknown}; known: {sorted(known)}")
    for k, v in cols.items():  # text, booleans or None refused up front, named
        if np.asarray(v).dtype.kind not in "iuf":
            cols[k] = as_float_array(k, np.asarray(v, dtype=object)) if np.asarray(
                v).dtype.kind == "O" else as_float_array(k, v)
    n = len(cols["concentration"])
    inputs = list(cols)
    result_keys = list(_RESULT_KEYS) + (list(_CONDUCTANCE_KEYS) if length is not None else []) \
        + (list(_SURFACE_KEYS) if surface is not None else [])
    columns = ["design"] + inputs + result_keys + ["error"]

    # -- the file: start it, or pick up what it already holds ------------------------
    previous = None
    fh = None
    if output is not None:
        path = Path(output)
        settings = {"shape": shape, "salt": salt, "model": model, "tol": tol,
                    "length": length, "inputs": inputs}
        if surface is not None:
            settings["surface"] = repr(surface)
        meta = {"version": _FILE_VERSION, **settings, "designs": n,
                "fingerprint": _fingerprint(cols, settings)}
        if path.exists() and path.stat().st_size > 0:
            if not resume:
                raise ValueError(f"output = {str(path)!r} exists; pass resume=True to continue "
                                 "that sweep, or choose another file")
            old_meta, previous = _read_file(path)
            differs = [k for k in ("version", "shape", "salt", "model", "tol", "length",
                                   "inputs", "designs", "fingerprint")
                       if old_meta.get(k) != meta[k]]
            if differs:
                show = ", ".join(f"{k}: file {old_meta.get(k)!r}, now {meta[k]!r}"
                                 for k in differs if k != "fingerprint")
                raise ValueError(f"output = {str(path)!r} was written for a different sweep "
                                 f"({show or 'the design values differ'}); resume only the "
                                 "same designs and settings, or choose another file")
            if previous is not None:
                previous = _check_previous(previous, cols, columns, path)
            fh = open(path, "a", encoding="utf-8", newline="")
        else:
            path.parent.mkdir(parents=True, exist_ok=True)
            fh = open(path, "w", encoding="utf-8", newline="")
            fh.write(FILE_TAG + json.dumps(meta) + "\n" + ",".join(columns) + "\n")
            _sync(fh)

    finished = np.zeros(n, dtype=bool)
    if previous is not None:
        finished[previous["design"].to_numpy(dtype=int)] = True
    todo = np.flatnonzero(~finished)
    step = 1 if SHAPES[shape].kind == "section" else chunk_size
    chunks = [todo[i:i + step] for i in range(0, len(todo), step)]
    args = (shape, salt, model, tol, length)
    stop_first = on_error == "raise"
    if stop_first and previous is not None and previous["error"].notna().any():
        chunks = []  # the file already holds a failed design: report it below
    bar = None
    if progress is None:
        progress = len(chunks) > 1
    if progress:
        try:
            from tqdm.auto import tqdm
            bar = tqdm(total=n, initial=n - len(todo), desc="designs", unit="design")
        except ImportError:  # tqdm is optional
            bar = None

    parts = [] if previous is None else [previous]
    written, failed_out = 0, []      # in_memory=False: what the file got, the failed rows
    if not in_memory and previous is not None:
        written = len(previous)
        bad = previous["error"].notna()
        failed_out = [(int(d), e) for d, e in zip(previous["design"][bad], previous["error"][bad])]
        parts = []
    failure = None
    try:
        if executor is None:
            pending = ((idx, _evaluate(*args, {k: v[idx] for k, v in cols.items()},
                                       time_limit, stop_first, surface)) for idx in chunks)
        else:
            futures = {executor.submit(_evaluate, *args, {k: v[idx] for k, v in cols.items()},
                                       time_limit, stop_first, surface): idx
                       for idx in chunks}
            pending = ((futures[f], f.result()) for f in _as_completed(list(futures)))
        if stop_first and previous is not None and previous["error"].notna().any():
            failure = previous[previous["error"].notna()].sort_values("design").iloc[0]
        for idx, res in pending:
            part = _part(idx, cols, res, result_keys)
            bad = part["error"].notna()
            if stop_first and bad.any():
                failure = part[bad].iloc[0]
                part = part[~bad]  # the failing design is not written: a resume retries it
            if in_memory:
                parts.append(part)
            else:
                written += len(part)
                bad = part["error"].notna()
                failed_out += [(int(d), e) for d, e in zip(part["design"][bad], part["error"][bad])]
            if fh is not None and len(part):
                part.to_csv(fh, header=False, index=False, columns=columns)
                _sync(fh)
            if bar is not None:
                bar.update(len(idx))
            if failure is not None:
                if executor is not None:
                    for f in futures:
                        f.cancel()
                break
    finally:
        if bar is not None:
            bar.close()
        if fh is not None:
            fh.close()
    if failure is not None:
        row = int(failure["design"])
        params = {k: (v.item() if hasattr(v, "item") else v)
                  for k, v in ((k, cols[k][row]) for k in inputs)}
        shown = ", ".join(f"{k}={v!r}" for k, v in params.items())
        kept = sum(len(p) for p in parts) if in_memory else written
        where = f"; the {kept} designs finished are in {str(output)!r}" if output else ""
        raise SweepError(f"design {row} ({shown}) failed: {failure['error']}{where}",
                         row=row, parameters=params)

    if not in_memory:
        failed_out.sort()
        if failed_out:
            shown = ", ".join(str(i) for i, _ in failed_out[:10]) + (
                ", ..." if len(failed_out) > 10 else "")
            warnings.warn(f"{len(failed_out)} of {n} designs failed (rows {shown}); their "
                          f"results are NaN in {str(output)!r} and the 'error' column says "
                          f"why, e.g. row {failed_out[0][0]}: {failed_out[0][1]}",
                          SweepWarning, stacklevel=2)
        return None
    frame = pd.concat(parts, ignore_index=True) if parts else pd.DataFrame(columns=columns)
    frame = frame.sort_values("design").set_index("design")
    frame.index.name = None
    frame = frame[inputs + result_keys + ["error"]]
    for k in ("error", "model"):
        frame[k] = frame[k].astype(object).where(frame[k].notna(), None)
    failed = [int(i) for i in frame.index[frame["error"].notna()]]
    frame.attrs["failed"] = failed
    frame.attrs["units"] = {k: u for k, u in {**RESULT_UNITS, **CONDUCTANCE_UNITS}.items()
                            if u != "-"}
    frame.attrs["units"].update(surface_potential="V", charged_fraction="-")
    if failed:
        shown = ", ".join(str(i) for i in failed[:10]) + (", ..." if len(failed) > 10 else "")
        first = frame["error"][failed[0]]
        warnings.warn(f"{len(failed)} of {n} designs failed (rows {shown}); their results are "
                      f"NaN and the 'error' column says why, e.g. row {failed[0]}: {first}",
                      SweepWarning, stacklevel=2)
    return frame


def _sync(fh):
    fh.flush()
    os.fsync(fh.fileno())


def _part(idx, cols, res, result_keys):
    """The finished designs of one chunk as a DataFrame with a ``design`` column."""
    import pandas as pd

    keep = res["done"]
    data = {"design": idx[keep]}
    data.update({k: v[idx][keep] for k, v in cols.items()})
    data.update({k: res[k][keep] for k in result_keys})
    data["error"] = res["error"][keep]
    return pd.DataFrame(data)


def _check_previous(previous, cols, columns, path):
    """The rows of a sweep file, checked against the design table."""
    if list(previous.columns) != columns:
        raise ValueError(f"output = {str(path)!r} has columns {list(previous.columns)}, "
                         f"expected {columns}; choose another file")
    previous = previous.drop_duplicates("design", keep="last")
    design = previous["design"].to_numpy()
    n = len(cols["concentration"])
    if np.any((design < 0) | (design >= n)):
        raise ValueError(f"output = {str(path)!r} holds design rows outside 0..{n - 1}")
    design = design.astype(int)
    for k, v in cols.items():
        if not np.array_equal(previous[k].to_numpy(dtype=float), np.asarray(v, float)[design]):
            bad = int(design[np.flatnonzero(previous[k].to_numpy(dtype=float)
                                            != np.asarray(v, float)[design])[0]])
            raise ValueError(f"output = {str(path)!r}: design {bad} has {k} = "
                             f"{previous[k].to_numpy()[design == bad][0]!r} in the file but "
                             f"{v[bad]!r} in the design table; resume only the same designs")
    previous["design"] = design
    return previous
