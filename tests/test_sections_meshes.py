"""The mesh cache (ekexplore.sections.meshes): bounded in bytes."""
import tracemalloc

import numpy as np

import ekexplore as ek
from ekexplore.sections.meshes import _cached, build_mesh


def test_mesh_bytes_count_the_factorisation_and_match_the_allocations():
    # nbytes must follow what the mesh really holds: measured with tracemalloc
    # while the mesh is built and its Dirichlet matrix factorised.
    _cached.cache_clear()
    tracemalloc.start()
    mesh = build_mesh("ellipse", (1.5, 1.0), 64, 0.05)
    before = mesh.nbytes()
    mesh.lu_dirichlet
    after = mesh.nbytes()
    _, peak = tracemalloc.get_traced_memory()
    current, _ = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    assert after > before
    # within a factor 3 of what stays allocated (temporaries of the build excluded)
    assert current / 3 <= after <= 3 * current


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
