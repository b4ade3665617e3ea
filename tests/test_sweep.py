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
