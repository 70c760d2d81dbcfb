"""The command line: verbs, exit codes and messages (no traceback for input errors)."""
import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
BAD = ROOT / "tests" / "scenario" / "bad"


def _run(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "supercrit", *args], capture_output=True, text=True,
                          cwd=cwd or ROOT, timeout=600)


def test_check_valid_and_invalid_files():
    ok = _run("check", str(ROOT / "scenarios" / "gas_storage_compression.yaml"))
    assert ok.returncode == 0 and "valid" in ok.stdout
    bad = sorted(BAD.glob("*.yaml"))[:5]
    for f in bad:
        r = _run("check", str(f))
        assert r.returncode == 2, (f, r.stderr)
        assert "Traceback" not in r.stderr
        assert f.name in r.stderr


def test_state_verb_and_errors():
    r = _run("state", "--fluid", "CO2", "--model", "pr", "--T", "40 degC", "--p", "100 bar")
    assert r.returncode == 0 and "supercritical" in r.stdout and "563.6" in r.stdout
    r = _run("state", "--fluid", "C02", "--T", "40 degC", "--p", "100 bar")
    assert r.returncode == 2 and "Did you mean 'CO2'" in r.stderr and "Traceback" not in r.stderr
    r = _run("state", "--T", "40 C", "--p", "100 bar")
    assert r.returncode == 2 and "degC" in r.stderr


def test_run_writes_outputs_and_fail_on_infeasible(tmp_path):
    f = ROOT / "scenarios" / "gas_storage_compression.yaml"
    r = _run("run", str(f), "--out", str(tmp_path), "--no-report")
    assert r.returncode == 0, r.stderr
    doc = json.loads((tmp_path / "gas-storage-compression.json").read_text())
    verdicts = {x["route"]: x["verdict"] for x in doc["routes"]}
    assert verdicts["two-stages"] == "infeasible"  # 153 degC discharge against the 150 degC limit
    assert (tmp_path / "gas-storage-compression-streams.csv").exists()
    r2 = _run("run", str(f), "--out", str(tmp_path), "--no-report", "--fail-on-infeasible")
    assert r2.returncode == 4
    first = (tmp_path / "gas-storage-compression.json").read_bytes()
    assert first == json.dumps(doc, indent=1, sort_keys=True).encode() + b"\n"


def test_run_with_invalid_file_exits_2(tmp_path):
    r = _run("run", str(BAD / sorted(p.name for p in BAD.glob("*.yaml"))[0]), "--out", str(tmp_path))
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert not list(tmp_path.iterdir())  # nothing written


@pytest.mark.parametrize("verb", ["run", "check", "state"])
def test_help(verb):
    r = _run(verb, "--help")
    assert r.returncode == 0 and "usage" in r.stdout
