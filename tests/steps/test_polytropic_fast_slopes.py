"""The polytropic path's in-step slopes (continuing the step's phase, no stability check) give the same
path as full flashes at every slope evaluation - also where the path enters the two-phase region."""
import numpy as np
import pytest

import supercrit.steps.compress as compress
from supercrit import Fluid


def _path(fluid, st1, p2, eta, expand):
    ps, states = compress.polytropic_path(fluid, st1, p2, eta, expand)
    return np.array([[float(s.T), float(s.p), float(s.h)] for s in states]), [str(s.phase) for s in states]


@pytest.mark.parametrize("case", ["mixture-compression", "wet-expansion"])
def test_fast_slopes_equal_full_flashes(case, monkeypatch):
    if case == "mixture-compression":
        f = Fluid({"CO2": 0.96, "N2": 0.02, "O2": 0.01, "Ar": 0.005, "CH4": 0.005}, model="peng-robinson")
        st1, p2, eta, expand = f.state(T=308.15, p=10e5), 40e5, 0.8, False
    else:  # CO2 vapour 2 K above saturation at 40 bar expanded to 20 bar: the path enters the dome
        f = Fluid("CO2", model="peng-robinson")
        Ts = float(f.saturation(p=40e5).T)
        st1, p2, eta, expand = f.state(T=Ts + 2.0, p=40e5), 20e5, 0.85, True
    fast, ph_fast = _path(f, st1, p2, eta, expand)
    monkeypatch.setattr(compress, "continue_phase", lambda *a, **k: None)  # every slope a full flash
    full, ph_full = _path(f, st1, p2, eta, expand)
    assert ph_fast == ph_full
    np.testing.assert_allclose(fast, full, rtol=1e-9)
    if case == "wet-expansion":
        assert ph_full[0] == "gas" and ph_full[-1] == "two-phase"  # the step that changes phase is repeated


@pytest.mark.parametrize("case", ["co2-pump", "co2-dense-compressor", "n2-compressor"])
def test_sampled_path_between_integration_nodes_matches_a_fine_integration(case):
    """The path of a machine stage is integrated with a few long RK4 steps and sampled between the nodes on
    the cubic Hermite interpolant of h(ln p); at every sample it must agree with an integration of 80 short
    steps (every 4th node) to 1 mK, and its end with that integration's end to 1e-6 relative in h."""
    if case == "co2-pump":
        f = Fluid("CO2", model="span-wagner")
        st1, p2 = f.state(T=283.15, p=59e5), 300e5
    elif case == "co2-dense-compressor":
        f = Fluid("CO2", model="span-wagner")
        st1, p2 = f.state(T=313.15, p=130e5), 300e5
    else:
        f = Fluid("N2", model="peng-robinson")
        st1, p2 = f.state(T=300.0, p=10e5), 50e5
    ps, states = compress.polytropic_path(f, st1, p2, 0.75, max_step=0.25)
    ps_fine, fine = compress.polytropic_path(f, st1, p2, 0.75, n_steps=4 * compress.N_SEGMENTS)
    assert len(states) == compress.N_SEGMENTS + 1
    np.testing.assert_allclose(ps, ps_fine[::4], rtol=1e-12)
    T = np.array([float(s.T) for s in states])
    T_fine = np.array([float(s.T) for s in fine[::4]])
    assert np.max(np.abs(T - T_fine)) < 1e-3
    assert float(states[-1].h) == pytest.approx(float(fine[-1].h), rel=1e-6)
