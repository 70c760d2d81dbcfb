"""Every bundled scenario runs end to end; its balances close, recycles converge, the report is within budget
and renders in a browser; the JSON output is the same bytes for the same input."""
from pathlib import Path

import pytest

from supercrit.runner import run_scenario, write_outputs

ROOT = Path(__file__).resolve().parent.parent
BUNDLED = sorted((ROOT / "scenarios").glob("*.yaml"))


@pytest.fixture(scope="session")
def bundled_runs(tmp_path_factory):
    out = tmp_path_factory.mktemp("bundled")
    runs = {}
    for f in BUNDLED:
        run = run_scenario(f)
        runs[f.stem] = (run, write_outputs(run, out))
    return runs


def test_four_bundled_scenarios_with_two_alternatives_each():
    assert len(BUNDLED) >= 4
    from supercrit.scenario import load_scenario

    for f in BUNDLED:
        sc = load_scenario(f)
        assert len(sc.routes) >= 2, f
        assert f.read_text().startswith("#"), f"{f} starts with its comment block"


@pytest.mark.parametrize("name", [f.stem for f in BUNDLED])
def test_bundled_scenario_runs_with_default_model(bundled_runs, name):
    run, paths = bundled_runs[name]
    assert not run.errors, run.errors
    for rid, rr in run.result.routes.items():
        assert rr.balance.mass < 1e-9 and rr.balance.energy < 1e-9, rid
        assert rr.iterations < 50
    assert paths["html"].stat().st_size < 6e6  # budget: 6 MB per bundled report
    assert all(ra.rank for ra in run.analysis.routes)


@pytest.mark.parametrize("name", [f.stem for f in BUNDLED])
def test_bundled_report_renders_in_a_browser(bundled_runs, name, tmp_path):
    from report.test_report_browser import check_rendered, open_in_chromium

    _, paths = bundled_runs[name]
    dom, errors = open_in_chromium(paths["html"], tmp_path, tmp_path / f"{name}.png")
    assert not errors, errors
    check_rendered(dom)


def test_json_is_identical_across_runs(tmp_path):
    f = ROOT / "scenarios" / "gas_storage_compression.yaml"
    a = write_outputs(run_scenario(f), tmp_path / "a", report=False)["json"].read_bytes()
    b = write_outputs(run_scenario(f), tmp_path / "b", report=False)["json"].read_bytes()
    assert a == b


@pytest.mark.slow
@pytest.mark.parametrize("model", ["peng-robinson", "soave-redlich-kwong"])
@pytest.mark.parametrize("name", [f.stem for f in BUNDLED])
def test_bundled_scenario_runs_with_cubic_models(name, model):
    run = run_scenario(ROOT / "scenarios" / f"{name}.yaml", model=model)
    assert not run.errors, run.errors
    for rr in run.result.routes.values():
        assert rr.balance.mass < 1e-9 and rr.balance.energy < 1e-9
        assert rr.iterations < 50


def test_json_does_not_depend_on_what_the_process_computed_before(tmp_path):
    """A sweep worker computes many variants in one process; per-process caches (the interpolated
    pseudo-critical line) must never change an answer. The extraction loop crosses and approaches the
    pseudo-critical line on isobars and along pumps and compressors."""
    from supercrit.analysis import crossings

    f = ROOT / "scenarios" / "co2_extraction_loop.yaml"
    crossings._LINES.clear()
    a = write_outputs(run_scenario(f), tmp_path / "a", report=False)["json"].read_bytes()
    b = write_outputs(run_scenario(f), tmp_path / "b", report=False)["json"].read_bytes()  # line cached now
    assert a == b
