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
