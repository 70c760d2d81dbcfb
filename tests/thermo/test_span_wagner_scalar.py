"""The plain-Python single-state path of the Span-Wagner model equals its array path to round-off."""
import numpy as np

from supercrit.thermo.models.helmholtz.span_wagner import span_wagner_co2


def test_scalar_path_equals_array_path():
    m = span_wagner_co2()
    rng = np.random.default_rng(7)
    T = np.concatenate([rng.uniform(217.0, 1100.0, 400), 304.1282 * (1 + rng.uniform(-0.01, 0.01, 200))])
    rho = np.concatenate([rng.uniform(1.0, 26000.0, 400), 10624.9063 * (1 + rng.uniform(-0.02, 0.02, 200))])
    arr = m._derivs2(np.stack([T, T]), np.stack([rho, rho]), np.ones((2, T.size, 1)))
    for i in range(T.size):
        one = m.alphar_derivs(T[i], rho[i], np.ones(1))
        for key, name in (((0, 0), "A00"), ((1, 0), "A10"), ((2, 0), "A20"), ((0, 1), "A01"), ((1, 1), "A11"),
                          ((0, 2), "A02")):
            ref = arr[key][0, i]
            assert abs(float(getattr(one, name)) - ref) <= 1e-12 * max(1.0, abs(ref)), (T[i], rho[i], name)
