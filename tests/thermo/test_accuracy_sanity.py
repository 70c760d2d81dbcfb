"""Sanity bounds on the accuracy table (docs/accuracy_table.py): lighter models against Span-Wagner.

Reference: supercrit's span-wagner model (Span & Wagner, J. Phys. Chem. Ref. Data 25 (1996) 1509) and
CoolProp 8.0.0 HEOS CO2. Bounds are sanity bounds (common practice for cubic equations in the gas region),
not accuracy claims.
"""
import importlib.util
from pathlib import Path

import numpy as np
import pytest

SCRIPT = Path(__file__).resolve().parents[2] / "docs" / "accuracy_table.py"


@pytest.fixture(scope="module")
def table():
    spec = importlib.util.spec_from_file_location("accuracy_table", SCRIPT)
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    regions = mod.region_states()
    sw = {name: mod.model_properties("span-wagner", T, p)[0] for name, (T, p, _) in regions.items()}
    return mod, regions, sw


def test_peng_robinson_gas_density_within_3_percent_of_span_wagner(table):
    mod, regions, sw = table
    T, p, _ = regions["gas"]
    dev = mod.deviations(mod.model_properties("peng-robinson", T, p)[0], sw["gas"])
    assert dev["rho"][1] < 3.0   # max % deviation (2.34 % in the table)
    assert dev["rho"][0] < 0.5   # mean


def test_cubic_dense_density_errors_are_percent_not_tens_of_percent(table):
    # DOMAIN.md 0 item 5: PR misses near-critical density by ~10 %; the table must show that, not hide it
    mod, regions, sw = table
    T, p, _ = regions["near-critical"]
    dev = mod.deviations(mod.model_properties("peng-robinson", T, p)[0], sw["near-critical"])
    assert 3.0 < dev["rho"][1] < 30.0


def test_ideal_gas_is_exact_only_at_low_pressure(table):
    mod, regions, sw = table
    T, p, _ = regions["gas"]
    low = p <= 0.15e6
    ig = mod.model_properties("ideal-gas", T[low], p[low])[0]
    ref = {k: v[low] for k, v in sw["gas"].items()}
    assert mod.deviations(ig, ref)["rho"][1] < 2.0


def test_virial_refusals_are_reported_as_out_of_range(table):
    mod, regions, sw = table
    T, p, _ = regions["near-critical"]
    vals, refused = mod.model_properties("virial", T, p)
    assert refused == T.size
    assert mod._fmt(mod.deviations(vals, sw["near-critical"]), "rho") == "out of range"


def test_span_wagner_matches_coolprop_in_every_region(table):
    # CoolProp 8.0.0 HEOS CO2: the same equation; 1e-6 relative on density everywhere in the grids
    pytest.importorskip("CoolProp")
    mod, regions, sw = table
    for name, (T, p, _) in regions.items():
        ref, _ = mod.coolprop_properties(T, p)
        assert np.max(np.abs(sw[name]["rho"] / ref["rho"] - 1.0)) < 1e-6, name
