"""Outputs: file names derived from scenario names stay inside the output folder; a failed report leaves the
previous report whole."""
import pytest

from supercrit import runner
from supercrit.runner import run_scenario, write_outputs

TEXT = """
name: '../../../tmp/evil name/..'
fluid: {components: N2, model: ideal-gas}
feed: {T: 20 degC, p: 5 bar, flow: 1 kg/s}
routes:
  - id: r
    steps:
      - {id: f, kind: feed}
      - {id: c, kind: cool, T_out: 10 degC}
      - {id: s, kind: sink}
"""


def test_output_names_are_sanitised(tmp_path):
    out = tmp_path / "out"
    paths = write_outputs(run_scenario(TEXT), out, report=False)
    for p in paths.values():
        assert p.resolve().parent == out.resolve()
        assert ".." not in p.name and "/" not in p.name


def test_failed_report_keeps_the_previous_one(tmp_path, monkeypatch):
    run = run_scenario(TEXT)
    paths = write_outputs(run, tmp_path, report=True)
    before = paths["html"].read_bytes()

    def boom(*a, **k):
        raise RuntimeError("report failed half-way")

    monkeypatch.setattr(runner, "build_report_html", boom)
    with pytest.raises(RuntimeError):
        write_outputs(run, tmp_path, report=True)
    assert paths["html"].read_bytes() == before
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]
