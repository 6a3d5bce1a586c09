"""The three-phase flash from Python (``max_phases=3``): methane, n-hexane and water with
Peng–Robinson and k_ij = 0.5 between water and each hydrocarbon (a typical size for
water–alkane pairs in cubic equations; common practice, no source). The checks are the
equilibrium conditions recomputed through the independent ``PhaseState`` route, and the
same numbers as the Rust three-phase test of the same system (tests/tests/three_phase.rs)."""

import numpy as np
import pytest

import tieline as tl

MODEL = tl.Model(["methane", "n-hexane", "water"], kij={("water", "methane"): 0.5, ("water", "n-hexane"): 0.5})
Z = np.array([0.3, 0.2, 0.5])
T, P = 300.0, 2.0e6


def test_default_reports_the_third_phase_as_an_error():
    with pytest.raises(tl.NoSolutionError, match="more than two phases"):
        tl.flash(MODEL, T, P, Z)


def test_three_phases_satisfy_equilibrium():
    r = tl.flash(MODEL, T, P, Z, max_phases=3)
    assert [ph.kind for ph in r.phases] == ["vapor", "liquid2", "liquid"]
    frac = np.array([ph.fraction for ph in r.phases])
    comp = np.array([ph.composition for ph in r.phases])
    np.testing.assert_allclose(frac @ comp, Z, atol=1e-12)
    lnf = []
    for ph in r.phases:
        s = tl.PhaseState(MODEL, T, P, ph.composition)
        lnf.append(np.log(ph.composition) + s.ln_phi)
    lnf = np.array(lnf)
    np.testing.assert_allclose(lnf[1:], np.broadcast_to(lnf[0], (2, 3)), atol=1e-9)
    assert r.diagnostics.certificate >= -1e-10
    assert comp[2, 2] > 0.999 and comp[0, 0] > 0.9 and comp[1, 1] > 0.8


def test_vectorised_results_hold_three_slots():
    ts = np.array([290.0, 300.0, 310.0])
    s = tl.flash(MODEL, ts, P, Z, max_phases=3)
    assert s.phase_kind.shape == (3, 3) and s.composition.shape == (3, 3, 3)
    assert (s.num_phases == 3).all()
    one = tl.flash(MODEL, 300.0, P, Z, max_phases=3)
    np.testing.assert_allclose(s.phase_fraction[1], [ph.fraction for ph in one.phases], atol=1e-9)
    # Two slots by default: the three-phase points are flagged, not truncated.
    flagged = tl.flash(MODEL, ts, P, Z, on_error="flag")
    assert not flagged.ok.any() and flagged.phase_kind.shape == (3, 2)


@pytest.mark.parametrize("bad", [1, 4, 2.5, True, "3"])
def test_max_phases_is_checked(bad):
    with pytest.raises(tl.InvalidInputError, match="max_phases"):
        tl.flash(MODEL, T, P, Z, max_phases=bad)
