"""Running sweeps: the same table bytes from 1 process, 2 processes and a Dask LocalCluster; an interrupted
sweep resumed computes only the missing variants; a failing variant is recorded and the sweep goes on; the
sweep report escapes scenario text; the command line prints the count first and exits 0 / 2 / 3."""
import json
from pathlib import Path

import pytest

import supercrit.runner
from supercrit.cli import main
from supercrit.errors import ConvergenceError, InputError
from supercrit.report.sweep import pareto_front
from supercrit.sweep import run_sweep

HERE = Path(__file__).parent
TOY = HERE / "toy_sweep.yaml"  # ideal-gas N2, 3 outlet pressures x 2 efficiencies, one route: 6 variants


@pytest.fixture(scope="module")
def serial(tmp_path_factory):
    out = tmp_path_factory.mktemp("serial")
    return run_sweep(TOY, out, jobs=1, progress=False), out


def _table(paths):
    return paths["csv"].read_bytes(), paths["json"].read_bytes()


def test_serial_sweep_writes_the_whole_table(serial):
    outcome, out = serial
    assert outcome.computed == 6 and outcome.failed == 0 and not outcome.stopped and not outcome.all_failed
    lines = outcome.paths["csv"].read_text().splitlines()
    assert len(lines) == 1 + 6
    assert lines[0].startswith("variant,steps.comp.p_out [Pa],steps.comp.efficiency [-],route,verdict,reason")
    doc = json.loads(outcome.paths["json"].read_text())
    assert [r["variant"] for r in doc["rows"]] == list(range(6))
    assert [r["steps.comp.p_out [Pa]"] for r in doc["rows"]] == [2e5, 2e5, 4e5, 4e5, 6e5, 6e5]
    verdicts = [r["verdict"] for r in doc["rows"]]
    # ideal-gas discharge temperature T2 = T1 (1 + (r^((k-1)/k) - 1)/eta), k = 1.4 for N2 (textbook relation):
    # 2 bar: 293.15 K x (1 + 0.2190/0.6) = 400 K < 423.15 K limit; 4 bar, eta 0.8: 293.15 x 1.6207 = 475 K > limit
    assert verdicts[:2] == ["feasible", "feasible"] and set(verdicts[2:]) == {"infeasible"}
    assert all(r["rule"] == "discharge-T" for r in doc["rows"][2:])
    power = [r["shaft_power [W]"] for r in doc["rows"]]
    assert power[0] > power[1] and power[2] > power[0]  # lower efficiency, higher pressure: more power
    assert outcome.paths["html"].exists() and outcome.paths["log"].exists()


def test_two_processes_give_the_same_bytes(serial, tmp_path):
    outcome, _ = serial
    par = run_sweep(TOY, tmp_path, jobs=2, progress=False, report=False)
    assert par.computed == 6
    assert _table(par.paths) == _table(outcome.paths)


def test_dask_local_cluster_gives_the_same_bytes(serial, tmp_path):
    distributed = pytest.importorskip("distributed", reason="dask is an optional extra: pip install supercrit[dask]")
    outcome, _ = serial
    # workers as threads of this process: the scheduler, the client and the task path are those of a real
    # cluster, without the seconds each spawned worker needs to import supercrit (the pickled task itself is
    # tested by the two-process run above)
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=False, dashboard_address=None) as cl:
        out = run_sweep(TOY, tmp_path, scheduler=cl.scheduler_address, progress=False, report=False)
    assert out.computed == 6
    assert _table(out.paths) == _table(outcome.paths)


def test_interrupted_sweep_resumes_only_the_missing_variants(serial, tmp_path):
    outcome, _ = serial
    first = run_sweep(TOY, tmp_path, jobs=1, progress=False, stop_after=2, report=False)
    assert first.computed == 2 and first.stopped
    log = first.paths["log"]
    # a kill in the middle of writing: the third record is cut short
    third = json.dumps(outcome.records[2], sort_keys=True, separators=(",", ":"))
    with open(log, "a") as fh:
        fh.write(third[: len(third) // 2])
    again = run_sweep(TOY, tmp_path, jobs=1, progress=False, resume=True, report=False)
    assert (again.resumed, again.computed) == (2, 4)  # variants 0, 1 kept; the cut record is computed again
    assert _table(again.paths) == _table(outcome.paths)
    assert len(log.read_text().splitlines()) == 1 + 6
    done = run_sweep(TOY, tmp_path, jobs=1, progress=False, resume=True, report=False)
    assert (done.resumed, done.computed) == (6, 0)


def test_resume_refuses_a_log_of_another_scenario(tmp_path):
    run_sweep(TOY, tmp_path, jobs=1, progress=False, stop_after=1, report=False)
    other = tmp_path / "toy_sweep.yaml"
    other.write_text(TOY.read_text().replace("flow: 1 kg/s", "flow: 2 kg/s"))
    with pytest.raises(InputError, match="another version of the scenario file"):
        run_sweep(other, tmp_path, jobs=1, progress=False, resume=True)


def test_failed_variants_are_recorded_and_the_sweep_goes_on(monkeypatch, tmp_path):
    real = supercrit.runner.run_scenario

    def flaky(sc, **kw):
        p_out = sc.routes[0].step("comp").params["p_out"]
        if p_out == 4e5:
            raise ConvergenceError("recycle did not converge (test)")
        if p_out == 6e5 and sc.routes[0].step("comp").params["efficiency"] == 0.6:
            raise RuntimeError("an unexpected failure (test)")
        return real(sc, **kw)

    monkeypatch.setattr(supercrit.runner, "run_scenario", flaky)
    out = run_sweep(TOY, tmp_path, jobs=1, progress=False, report=False)
    assert out.computed == 6 and out.failed == 3 and not out.all_failed
    rows = json.loads(out.paths["json"].read_text())["rows"]
    errors = {r["variant"]: r["error"] for r in rows}
    assert "ConvergenceError: recycle did not converge (test)" in errors[2] and errors[2] == errors[3]
    assert errors[4].startswith("internal error RuntimeError: an unexpected failure (test)")
    assert errors[0] is None and errors[1] is None and errors[5] is None
    assert [r["verdict"] for r in rows if r["error"]] == ["not computed"] * 3


def test_cli_prints_the_count_first_and_exits_3_when_every_variant_fails(monkeypatch, tmp_path, capsys):
    def never(sc, **kw):
        raise ConvergenceError("no convergence (test)")

    monkeypatch.setattr(supercrit.runner, "run_scenario", never)
    code = main(["sweep", str(TOY), "--jobs", "1", "--out", str(tmp_path), "--no-report"])
    out = capsys.readouterr().out
    assert code == 3
    assert out.splitlines()[0] == "6 variants x 1 route (3 x 2)"


def test_cli_invalid_sweep_exits_2(tmp_path, capsys):
    bad = tmp_path / "bad.yaml"
    bad.write_text(TOY.read_text().replace("steps.comp.p_out", "steps.compressor.p_out"))
    assert main(["sweep", str(bad), "--out", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert f"{bad}:" in err and "no step 'compressor'" in err
    plain = tmp_path / "plain.yaml"
    plain.write_text(TOY.read_text().split("sweep:")[0])
    assert main(["sweep", str(plain), "--out", str(tmp_path)]) == 2
    assert "has no sweep: section" in capsys.readouterr().err


INJECT = ["<script>document.documentElement.setAttribute(`data-pwned`,`1`)</script>",
          '"><img src=x onerror="document.documentElement.setAttribute(`data-pwned`,`2`)">',
          "</script><script>document.documentElement.setAttribute(`data-pwned`,`3`)</script>"]


def test_sweep_report_escapes_hostile_text(monkeypatch, tmp_path):
    hostile = tmp_path / "hostile.yaml"
    text = TOY.read_text().replace("name: toy-sweep", f"name: 'x {INJECT[0]}'")
    text = text.replace("description: nitrogen compression, outlet pressure x efficiency", f"description: '{INJECT[1]}'")
    hostile.write_text(text)
    real = supercrit.runner.run_scenario

    def failing(sc, **kw):
        if sc.routes[0].step("comp").params["p_out"] == 6e5:
            raise ConvergenceError(INJECT[2])
        return real(sc, **kw)

    monkeypatch.setattr(supercrit.runner, "run_scenario", failing)
    out = run_sweep(hostile, tmp_path, jobs=1, progress=False)
    page = out.paths["html"].read_text(encoding="utf-8")
    for s in INJECT:
        assert s not in page
    assert "&lt;script&gt;" in page or "\\u003cscript\\u003e" in page  # the text is there, escaped
    assert page.count("<script>") == 2 and page.count("</script>") == 2  # plotly.js and the figure code
    assert "<img" not in page
    for section in ("Read this first", "Feasibility map", "Key figures", "Trade-off front", "Best variants", "on the front"):
        assert section in page
    assert "screening tool, not a design" in page and out.scenario.source_hash in page
    assert out.paths["html"].parent == tmp_path and out.paths["html"].name.endswith("-sweep.html")


def test_pareto_front_keeps_the_points_nothing_beats():
    # (specific energy, margin): (1, 1) and (2, 5) and (3, 9) are each best somewhere; (2.5, 4) is beaten by (2, 5)
    pts = [(2.5, 4.0), (1.0, 1.0), (3.0, 9.0), (2.0, 5.0), (4.0, 8.0)]
    assert pareto_front(pts, lower_is_better=True) == [1, 3, 2]
    assert pareto_front([(0.4, 1.0), (0.45, 0.5)], lower_is_better=False) == [1, 0]


def test_sweep_report_renders_in_a_browser(serial, tmp_path):
    import re

    from report.test_report_browser import open_in_chromium

    outcome, _ = serial
    dom, errors = open_in_chromium(outcome.paths["html"], tmp_path)
    assert not errors, errors
    ids = re.findall(r"<div id=(fig-[a-z0-9-]+) class=fig>", outcome.paths["html"].read_text(encoding="utf-8"))
    assert "fig-map-0" in ids and "fig-trade" in ids and any(i.startswith("fig-key") for i in ids)
    for fid in ids:
        assert re.search(rf'<div id="{fid}"[^>]*class="fig[^"]*js-plotly-plot', dom), f"{fid} was not drawn"
