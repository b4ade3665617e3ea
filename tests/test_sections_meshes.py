"""The mesh cache (ekexplore.sections.meshes): bounded in bytes."""
import numpy as np

import ekexplore as ek
from ekexplore.sections.meshes import _cached, build_mesh


def test_mesh_bytes_count_the_factorisation():
    # nbytes must grow by at least the stored values of the sparse LU factors
    # (8 bytes per non-zero) when the Dirichlet matrix is factorised
    _cached.cache_clear()
    mesh = build_mesh("ellipse", (1.5, 1.0), 64, 0.05)
    before = mesh.nbytes()
    lu = mesh.lu_dirichlet
    assert mesh.nbytes() >= before + 8 * lu.nnz
    assert before >= mesh.points.nbytes + mesh.K.data.nbytes


def test_mesh_cache_stays_under_its_byte_bound():
    old = _cached.max_bytes
    try:
        _cached.cache_clear()
        _cached.max_bytes = 8 * 2**20
        e = ek.Electrolyte.salt("KCl", 1.0)
        for w in np.linspace(100e-9, 400e-9, 8):
            ek.solve(ek.Ellipse(w, 100e-9), e, ek.Wall(zeta=-0.05), model="pb",
                     accuracy=1e-3)
            # the newest mesh may exceed the bound alone; otherwise the bound holds
            assert _cached.nbytes() <= _cached.max_bytes or _cached.cache_info().currsize == 1
        assert _cached.cache_info().misses > _cached.cache_info().currsize
    finally:
        _cached.max_bytes = old
        _cached.cache_clear()
