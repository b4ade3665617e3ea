"""Sweeps: serial, process pool and dask cluster give identical tables."""
from concurrent.futures import ProcessPoolExecutor

import numpy as np
import pytest
from numpy.testing import assert_array_equal, assert_allclose


def assert_same_table(a, b):
    """Same columns and values. Floats to 1e-13: numpy's vectorised exp may differ
    in the last bit with memory alignment, which another process can change."""
    assert list(a.columns) == list(b.columns)
    for col in a.columns:
        x, y = a[col].to_numpy(), b[col].to_numpy()
        if x.dtype.kind == "f":
            assert_allclose(x, y, rtol=1e-13, atol=0)
        else:
            assert_array_equal(x, y)

import ekexplore as ek

GRID = {"gap": np.geomspace(20e-9, 2e-6, 5), "concentration": [0.1, 1.0, 10.0],
        "zeta": [-0.1, -0.02]}


def test_sweep_matches_solve_and_has_every_quantity():
    df = ek.sweep(grid=GRID, shape="Slit", salt="NaCl", length=1e-3, chunk_size=7)
    assert len(df) == 5 * 3 * 2
    r = ek.solve(ek.Slit(gap=df["gap"].to_numpy()),
                 ek.Electrolyte.salt("NaCl", df["concentration"].to_numpy()),
                 ek.Wall(zeta=df["zeta"].to_numpy()))
    assert_allclose(df["electroosmotic"], r.electroosmotic, rtol=1e-13)
    assert_allclose(df["conductance"], r.conductances(1e-3)["conductance"], rtol=1e-13)
    for col in ("hydraulic", "streaming", "conductive", "dukhin", "max_efficiency",
                "counterion_share", "model", "error_estimate", "flow_per_volt"):
        assert col in df.columns
    assert df.attrs["units"]["electroosmotic"] == "m^2/(V s)"


def test_sweep_from_a_table_and_fixed_values():
    table = {"diameter": [50e-9, 1e-6, 20e-6], "concentration": [1.0, 2.0, 3.0]}
    df = ek.sweep(table=table, shape="Tube", salt="KCl", charge_density=-0.01,
                  temperature=310.0, model="pb")
    assert len(df) == 3
    assert_allclose(df["temperature"], 310.0)
    assert set(df["model"]) == {"pb"}


def test_process_pool_is_identical_to_serial():
    serial = ek.sweep(grid=GRID, chunk_size=8, progress=False)
    with ProcessPoolExecutor(max_workers=2) as pool:
        parallel = ek.sweep(grid=GRID, chunk_size=8, executor=pool, progress=False)
    assert_same_table(serial, parallel)


def test_dask_local_cluster_is_identical_to_serial():
    distributed = pytest.importorskip("distributed", reason="dask.distributed is in the "
                                      "test extra; install it with pip install -e .[test]")
    serial = ek.sweep(grid=GRID, chunk_size=10, progress=False)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        remote = ek.sweep(grid=GRID, chunk_size=10, executor=client, progress=False)
    assert_same_table(serial, remote)


@pytest.mark.parametrize("kwargs,match", [
    (dict(grid={"gap": [1e-6]}, zeta=-0.05), "concentration"),
    (dict(grid={"gap": [1e-6], "concentration": [1.0]}), "zeta"),
    (dict(grid={"gap": [1e-6], "concentration": [1.0], "colour": [1]}, zeta=-0.05),
     "unknown"),
    (dict(grid={"gap": [1e-6], "concentration": [1.0]}, zeta=-0.05, shape="Hexagon"),
     "shape"),
])
def test_sweep_rejects_bad_designs(kwargs, match):
    with pytest.raises(ValueError, match=match):
        ek.sweep(**kwargs)


def test_sections_sweep_one_design_per_task_matches_solve():
    # 2D sections go one design per task; the table matches single solves.
    grid = {"width": [300e-9, 1e-6], "depth": [100e-9], "concentration": [1.0, 10.0]}
    serial = ek.sweep(grid=grid, shape="Rectangle", zeta=-0.05, progress=False)
    assert len(serial) == 4
    with ProcessPoolExecutor(max_workers=2) as pool:
        parallel = ek.sweep(grid=grid, shape="Rectangle", zeta=-0.05, executor=pool,
                            progress=False)
    assert_same_table(serial, parallel)
    row = serial.iloc[3]
    r = ek.solve(ek.Rectangle(width=row["width"], depth=row["depth"]),
                 ek.Electrolyte.salt("KCl", row["concentration"]), ek.Wall(zeta=-0.05))
    assert_allclose(row["electroosmotic"], float(r.electroosmotic), rtol=1e-12)
    assert row["model"] == str(r.model)


# --- sweeps that keep their work -----------------------------------------------------
import multiprocessing
import os
import time
from concurrent.futures import ThreadPoolExecutor
from concurrent.futures.process import BrokenProcessPool

import importlib

# the module (ek.sweep is the function of the same name)
sweep_module = importlib.import_module("ekexplore.sweep")

# 12 designs; row 5 has a gap outside the allowed sizes (refused by Slit), row 10 a
# kappa*half-size below the solver range (refused by solve): both must be named.
BAD_TABLE = {"gap": [50e-9, 100e-9, 200e-9, 500e-9, 1e-6, 2.0, 50e-9, 100e-9, 200e-9,
                     500e-9, 2e-9, 1e-6],
             "concentration": [1.0] * 10 + [1e-5, 1.0]}
GOOD_ROWS = [0, 1, 2, 3, 4, 6, 7, 8, 9, 11]


def _direct(rows, table=BAD_TABLE, zeta=-0.05):
    """Single vector solve of the given rows (the reference a sweep row must equal)."""
    return ek.solve(ek.Slit(np.asarray(table["gap"])[rows]),
                    ek.Electrolyte.salt("KCl", np.asarray(table["concentration"])[rows]),
                    ek.Wall(zeta=zeta))


def test_failed_designs_are_recorded_and_the_rest_kept():
    with pytest.warns(sweep_module.SweepWarning, match=r"2 of 12 designs failed \(rows 5, 10\)"):
        df = ek.sweep(table=BAD_TABLE, zeta=-0.05, chunk_size=4, progress=False)
    assert len(df) == 12 and list(df.index) == list(range(12))
    assert df.attrs["failed"] == [5, 10]
    assert df["error"][5].startswith("ValueError: gap = 2 m is outside the allowed range")
    assert "kappa*half_size" in df["error"][10]
    assert df.loc[[5, 10], "electroosmotic"].isna().all()
    assert df.loc[[5, 10], "model"].isna().all()
    assert df.loc[GOOD_ROWS, "error"].isna().all()
    # the good rows are in their places: row i is design i
    r = _direct(GOOD_ROWS)
    assert_allclose(df.loc[GOOD_ROWS, "electroosmotic"], r.electroosmotic, rtol=1e-13)
    assert_allclose(df.loc[GOOD_ROWS, "gap"], np.asarray(BAD_TABLE["gap"])[GOOD_ROWS])


def test_failed_designs_recorded_in_a_process_pool():
    with ProcessPoolExecutor(max_workers=2) as pool, \
            pytest.warns(sweep_module.SweepWarning):
        df = ek.sweep(table=BAD_TABLE, zeta=-0.05, chunk_size=3, executor=pool,
                      progress=False)
    assert df.attrs["failed"] == [5, 10]
    assert_allclose(df.loc[GOOD_ROWS, "electroosmotic"], _direct(GOOD_ROWS).electroosmotic,
                    rtol=1e-13)


def test_stop_on_first_error_names_the_row_and_its_parameters(tmp_path):
    out = tmp_path / "run.csv"
    with pytest.raises(sweep_module.SweepError) as info:
        ek.sweep(table=BAD_TABLE, zeta=-0.05, chunk_size=4, on_error="raise", output=out,
                 progress=False)
    err = info.value
    assert err.row == 5
    assert err.parameters == {"gap": 2.0, "concentration": 1.0, "zeta": -0.05}
    assert "design 5 (gap=2.0, concentration=1.0, zeta=-0.05) failed: ValueError: gap = 2 m" \
        in str(err)
    assert isinstance(err, ValueError)
    # the five designs before it are kept in the file, the failing one is not
    kept = sweep_module.read_sweep(out)
    assert sorted(kept["design"]) == [0, 1, 2, 3, 4]


def _counting(monkeypatch):
    """Count the designs actually solved (serial sweeps run in this process)."""
    seen = []
    real = sweep_module._solve_rows

    def counted(shape, salt, model, tol, length, cols):
        out = real(shape, salt, model, tol, length, cols)
        seen.extend(cols["gap"].tolist())
        return out
    monkeypatch.setattr(sweep_module, "_solve_rows", counted)
    return seen


GRID12 = {"gap": np.geomspace(30e-9, 3e-6, 6), "concentration": [0.5, 5.0]}


def test_resume_after_an_interrupted_serial_run(tmp_path, monkeypatch):
    reference = ek.sweep(grid=GRID12, zeta=-0.04, chunk_size=2, progress=False)
    out = tmp_path / "run.csv"
    real = sweep_module._solve_rows
    calls = []

    def interrupted(shape, salt, model, tol, length, cols):
        calls.append(1)
        if len(calls) == 4:  # the user presses Ctrl+C during the fourth chunk
            raise KeyboardInterrupt
        return real(shape, salt, model, tol, length, cols)
    monkeypatch.setattr(sweep_module, "_solve_rows", interrupted)
    with pytest.raises(KeyboardInterrupt):
        ek.sweep(grid=GRID12, zeta=-0.04, chunk_size=2, output=out, progress=False)
    assert sorted(sweep_module.read_sweep(out)["design"]) == [0, 1, 2, 3, 4, 5]
    seen = _counting(monkeypatch)
    df = ek.sweep(grid=GRID12, zeta=-0.04, chunk_size=2, output=out, resume=True,
                  progress=False)
    assert len(seen) == 6  # only the six unfinished designs were computed
    assert_same_table(df, reference)
    # resuming a finished sweep computes nothing and returns the same table
    seen.clear()
    again = ek.sweep(grid=GRID12, zeta=-0.04, chunk_size=2, output=out, resume=True,
                     progress=False)
    assert seen == []
    assert_same_table(again, reference)


def _die_on_sentinel(shape, salt, model, tol, length, cols):
    if np.any(np.asarray(cols["gap"]) == GRID12["gap"][4]):
        os._exit(3)  # the worker process dies (out-of-memory killer, a crash)
    return _REAL_SOLVE_ROWS(shape, salt, model, tol, length, cols)


_REAL_SOLVE_ROWS = sweep_module._solve_rows


def test_resume_after_a_worker_process_is_killed(tmp_path, monkeypatch):
    reference = ek.sweep(grid=GRID12, zeta=-0.04, chunk_size=2, progress=False)
    out = tmp_path / "run.csv"
    monkeypatch.setattr(sweep_module, "_solve_rows", _die_on_sentinel)
    # fork: the worker inherits the patched module (the sentinel design kills it)
    ctx = multiprocessing.get_context("fork")
    with pytest.raises(BrokenProcessPool):
        with ProcessPoolExecutor(max_workers=1, mp_context=ctx) as pool:
            ek.sweep(grid=GRID12, zeta=-0.04, chunk_size=2, executor=pool, output=out,
                     progress=False)
    done = sorted(sweep_module.read_sweep(out)["design"])
    # designs are laid out gap-major: gap[4] is in designs 8 and 9 (the fifth chunk)
    assert 8 not in done and 9 not in done
    monkeypatch.setattr(sweep_module, "_solve_rows", _REAL_SOLVE_ROWS)
    seen = _counting(monkeypatch)
    df = ek.sweep(grid=GRID12, zeta=-0.04, chunk_size=2, output=out, resume=True,
                  progress=False)
    assert len(seen) == 12 - len(done)
    assert_same_table(df, reference)


def test_resume_drops_a_torn_last_line(tmp_path):
    out = tmp_path / "run.csv"
    reference = ek.sweep(grid=GRID12, zeta=-0.04, output=out, progress=False)
    lines = out.read_text().splitlines(keepends=True)
    # keep the metadata, header and 7 rows, then half of the next row (a crash mid-write)
    out.write_text("".join(lines[:9]) + lines[9][: len(lines[9]) // 2])
    df = ek.sweep(grid=GRID12, zeta=-0.04, output=out, resume=True, progress=False)
    assert_same_table(df, reference)
    assert len(out.read_text().splitlines()) == 2 + 12


def test_resume_refuses_a_changed_grid_or_settings(tmp_path):
    out = tmp_path / "run.csv"
    ek.sweep(grid=GRID12, zeta=-0.04, output=out, progress=False)
    with pytest.raises(ValueError, match="exists; pass resume=True"):
        ek.sweep(grid=GRID12, zeta=-0.04, output=out, progress=False)
    changed = {**GRID12, "concentration": [0.5, 6.0]}
    with pytest.raises(ValueError, match="different sweep"):
        ek.sweep(grid=changed, zeta=-0.04, output=out, resume=True, progress=False)
    with pytest.raises(ValueError, match="different sweep.*salt: file 'KCl', now 'NaCl'"):
        ek.sweep(grid=GRID12, zeta=-0.04, salt="NaCl", output=out, resume=True,
                 progress=False)
    with pytest.raises(ValueError, match="different sweep.*designs: file 12, now 10"):
        ek.sweep(grid={**GRID12, "gap": GRID12["gap"][:5]}, zeta=-0.04, output=out,
                 resume=True, progress=False)
    # a row edited in the file no longer matches the design table
    lines = out.read_text().splitlines(keepends=True)
    head, row = lines[:2], lines[2].split(",")
    row[1] = repr(float(row[1]) * 1.5)
    out.write_text("".join(head) + ",".join(row) + "".join(lines[3:]))
    with pytest.raises(ValueError, match="design 0 has gap"):
        ek.sweep(grid=GRID12, zeta=-0.04, output=out, resume=True, progress=False)
    other = tmp_path / "other.csv"
    other.write_text("a,b\n1,2\n")
    with pytest.raises(ValueError, match="not a sweep file"):
        ek.sweep(grid=GRID12, zeta=-0.04, output=other, resume=True, progress=False)


def test_file_is_plain_csv_after_one_metadata_line(tmp_path):
    import pandas as pd
    out = tmp_path / "run.csv"
    df = ek.sweep(grid=GRID12, zeta=-0.04, length=1e-3, output=out, progress=False)
    first = out.read_text().splitlines()[0]
    assert first.startswith("# ekexplore sweep {")
    plain = pd.read_csv(out, skiprows=1).sort_values("design")
    assert_allclose(plain["electroosmotic"], df["electroosmotic"], rtol=0)
    assert_allclose(plain["conductance"], df["conductance"], rtol=0)


def _slow_on_sentinel(shape, salt, model, tol, length, cols):
    if np.any(np.asarray(cols["gap"]) == GRID12["gap"][2]):
        for _ in range(3000):  # 30 s in short sleeps: interruptible by both timers
            time.sleep(0.01)
    return _REAL_SOLVE_ROWS(shape, salt, model, tol, length, cols)


@pytest.mark.parametrize("runner", ["serial", "threads", "processes"])
def test_time_limit_stops_a_slow_design(runner, monkeypatch):
    monkeypatch.setattr(sweep_module, "_solve_rows", _slow_on_sentinel)
    t0 = time.perf_counter()
    kw = dict(grid=GRID12, zeta=-0.04, chunk_size=4, time_limit=0.3, progress=False)
    with pytest.warns(sweep_module.SweepWarning, match="2 of 12 designs failed"):
        if runner == "serial":
            df = ek.sweep(**kw)
        elif runner == "threads":
            with ThreadPoolExecutor(max_workers=2) as pool:
                df = ek.sweep(executor=pool, **kw)
        else:
            with ProcessPoolExecutor(max_workers=2,
                                     mp_context=multiprocessing.get_context("fork")) as pool:
                df = ek.sweep(executor=pool, **kw)
    elapsed = time.perf_counter() - t0
    # designs 4 and 5 have gap[2]; the chunk (budget 4 x 0.3 s) overran, then each of the
    # two slow designs was stopped after 0.3 s: well below the 30 s they would take
    assert df.attrs["failed"] == [4, 5]
    assert df["error"][4].startswith("TimeoutError: the design ran longer than time_limit")
    assert df.drop(index=[4, 5])["error"].isna().all()
    assert elapsed < 15, elapsed
    monkeypatch.setattr(sweep_module, "_solve_rows", _REAL_SOLVE_ROWS)
    ok = ek.sweep(grid=GRID12, zeta=-0.04, progress=False)
    assert_allclose(df.drop(index=[4, 5])["electroosmotic"],
                    ok.drop(index=[4, 5])["electroosmotic"], rtol=1e-13)


def test_time_limit_on_a_real_2d_solve():
    grid = {"width": [2e-6], "depth": [1e-6], "concentration": [1.0]}
    with pytest.warns(sweep_module.SweepWarning):
        df = ek.sweep(grid=grid, shape="Rectangle", zeta=-0.05, model="pb",
                      time_limit=1e-3, progress=False)
    assert df["error"][0].startswith("TimeoutError")
    df = ek.sweep(grid=grid, shape="Rectangle", zeta=-0.05, model="pb", time_limit=120,
                  progress=False)
    assert df["error"].isna().all() and df["electroosmotic"][0] > 0


def test_time_limit_on_dask_threads(monkeypatch):
    distributed = pytest.importorskip("distributed")
    monkeypatch.setattr(sweep_module, "_solve_rows", _slow_on_sentinel)
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=2,
                            dashboard_address=None) as client, \
            pytest.warns(sweep_module.SweepWarning):
        df = ek.sweep(grid=GRID12, zeta=-0.04, chunk_size=4, time_limit=0.3,
                      executor=client, progress=False)
    assert df.attrs["failed"] == [4, 5]
    assert df["error"][5].startswith("TimeoutError")


@pytest.mark.parametrize("kwargs,match", [
    (dict(on_error="ignore"), "on_error"),
    (dict(time_limit=0), "time_limit"),
    (dict(time_limit="1"), "time_limit"),
    (dict(chunk_size=0), "chunk_size"),
    (dict(length=-1.0), "length"),
    (dict(in_memory=False), "in_memory=False needs output"),
    (dict(in_memory="no"), "in_memory"),
])
def test_sweep_options_are_checked(kwargs, match):
    with pytest.raises(ValueError, match=match):
        ek.sweep(grid=GRID12, zeta=-0.04, **kwargs)


def test_a_sweep_kept_only_in_its_file_writes_every_design(tmp_path):
    # in_memory=False (bounded memory at any number of designs): nothing is
    # returned, the file holds every design with the values of an in-memory
    # sweep, failed rows are named, and a resume completes the same file
    import pandas as pd
    out = tmp_path / "run.csv"
    with pytest.warns(sweep_module.SweepWarning, match=r"2 of 12 designs failed \(rows 5, 10\)"):
        got = ek.sweep(table=BAD_TABLE, zeta=-0.05, chunk_size=4, progress=False, output=out,
                       in_memory=False)
    assert got is None
    with pytest.warns(sweep_module.SweepWarning):
        df = ek.sweep(table=BAD_TABLE, zeta=-0.05, chunk_size=4, progress=False)
    plain = pd.read_csv(out, skiprows=1).sort_values("design").set_index("design")
    assert list(plain.index) == list(range(12))
    assert_allclose(plain.loc[GOOD_ROWS, "electroosmotic"], df.loc[GOOD_ROWS, "electroosmotic"],
                    rtol=0)
    assert plain.loc[[5, 10], "electroosmotic"].isna().all()
    assert plain["error"][5].startswith("ValueError: gap = 2 m")
    # resume of a finished file computes nothing and still names the failed rows
    with pytest.warns(sweep_module.SweepWarning, match=r"rows 5, 10"):
        assert ek.sweep(table=BAD_TABLE, zeta=-0.05, chunk_size=4, progress=False, output=out,
                        in_memory=False, resume=True) is None
    assert len(pd.read_csv(out, skiprows=1)) == 12
