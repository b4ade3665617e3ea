"""The regime in words (ekexplore.regimes), read from computed numbers."""
import ekexplore as ek
from ekexplore.regimes import regime_verdict


def test_regime_verdict_reads_the_numbers():
    e = ek.Electrolyte.salt("KCl", 0.1)
    ch = ek.Slit(gap=20e-9)
    w = ek.Wall(zeta=-0.1)
    r = ek.solve(ch, e, w, model="pb")
    thin = ek.solve(ch, e, w, model="thin")
    ratio = float(thin.electroosmotic / r.electroosmotic)
    text = regime_verdict(float(r.kappa_size), ratio, float(r.dukhin), float(r.counterion_share))
    assert text.startswith("double layers overlap")
    assert f"{ratio:.2g}x" in text
    assert "perm-selective" in text
    assert regime_verdict(500.0, 1.01, 0.01, 0.5).startswith("thin double layers")
