"""The sweep: section: every mistake reported with file:line:col (and a suggestion where one fits); variant
counting, the max_variants guard, and the variant scenarios built from the validated one."""
import re
import textwrap

import pytest

from supercrit.scenario import ScenarioError, load_scenario
from supercrit.sweep import iter_variants, variant_scenario

BASE = """\
name: toy
fluid: {components: N2, model: ideal-gas}
feeds:
  - {id: air, T: 20 degC, p: 1 bar, flow: 1 kg/s}
routes:
  - id: one-stage
    steps:
      - {id: in, kind: feed}
      - {id: comp, kind: compress, p_out: 3 bar, efficiency: 0.8}
      - {id: cooler, kind: cool, T_out: 30 degC}
      - {id: out, kind: sink, name: product}
  - id: two-stage
    based_on: one-stage
    changes: {comp: {stages: 2, intercool_T: 30 degC}}
"""


def _load(tmp_path, sweep: str):
    path = tmp_path / "sweep.yaml"
    path.write_text(BASE + textwrap.dedent(sweep))
    return path, load_scenario(path)


def _problems(tmp_path, sweep: str):
    path = tmp_path / "sweep.yaml"
    path.write_text(BASE + textwrap.dedent(sweep))
    with pytest.raises(ScenarioError) as info:
        load_scenario(path)
    for p in info.value.problems:  # each names the file, a line and a column
        assert re.match(re.escape(str(path)) + r":\d+:\d+: sweep", str(p)), str(p)
    return info.value


FIRST = BASE.count("\n") + 1  # line of "sweep:"

BAD = [
    ("sweep:\n  vari: []\n", FIRST + 1, "unknown key 'vari' in sweep. Did you mean 'vary'?"),
    ("sweep:\n  vary:\n    - {setting: step.comp.p_out, values: [2 bar]}\n", FIRST + 2,
     "starts with 'step'. Did you mean 'steps'?"),
    ("sweep:\n  vary:\n    - {setting: steps.compp.p_out, values: [2 bar]}\n", FIRST + 2,
     "no step 'compp' in the swept routes (one-stage, two-stage). Did you mean 'comp'?"),
    ("sweep:\n  vary:\n    - {setting: steps.comp.p_outt, values: [2 bar]}\n", FIRST + 2,
     "a compress step has no parameter 'p_outt'. Did you mean 'p_out'?"),
    ("sweep:\n  vary:\n    - {setting: steps.out.name, values: [a, b]}\n", FIRST + 2, "only numeric settings"),
    ("sweep:\n  vary:\n    - {setting: feeds.air.T, values: [20 C, 30 degC]}\n", FIRST + 2, "degC"),
    ("sweep:\n  vary:\n    - {setting: feeds.aire.T, values: [20 degC]}\n", FIRST + 2, "Did you mean 'air'?"),
    ("sweep:\n  vary:\n    - {setting: limits.max_discharge, values: [400 K]}\n", FIRST + 2,
     "Did you mean 'max_discharge_T'?"),
    ("sweep:\n  vary:\n    - {setting: steps.comp.efficiency, values: [0.7, 1.2]}\n", FIRST + 2,
     "1.2 is outside 0..1"),
    ("sweep:\n  vary:\n    - {setting: steps.comp.efficiency, values: [0.7, 0]}\n", FIRST + 2,
     "steps.comp.efficiency = 0 (SI) is outside its range (0, 1]"),
    ("sweep:\n  vary:\n    - setting: steps.comp.p_out\n      range: {from: 2 bar, to: 5 bar}\n", FIRST + 3,
     "range needs from, to, step; step missing"),
    ("sweep:\n  vary:\n    - setting: steps.comp.p_out\n      range: {from: 5 bar, to: 2 bar, step: 1 bar}\n",
     FIRST + 3, "is below from"),
    ("sweep:\n  vary:\n    - setting: feeds.air.T\n      range: {from: 10 degC, to: 30 degC, step: 5 degC}\n",
     FIRST + 3, "delta_degC"),
    ("sweep:\n  vary:\n    - setting: steps.comp.p_out\n      log_range: {from: 2 bar, to: 5 bar, points: 1}\n",
     FIRST + 3, "points must be 2 or more"),
    ("sweep:\n  vary:\n    - {setting: steps.comp.p_out, values: [2 bar], range: {from: 1 bar, to: 2 bar, "
     "step: 1 bar}}\n", FIRST + 2, "give only one of values, range or log_range"),
    ("sweep:\n  vary:\n    - {setting: steps.comp.p_out, values: [2 bar]}\n    - {setting: steps.comp.p_out, "
     "values: [3 bar]}\n", FIRST + 3, "is swept twice"),
    ("sweep:\n  vary:\n    - {setting: [steps.comp.p_out, feeds.air.T], values: [2 bar]}\n", FIRST + 2,
     "must be the same quantity"),
    ("sweep:\n  combine: paired\n  vary:\n    - {setting: steps.comp.p_out, values: [2 bar, 3 bar]}\n"
     "    - {setting: feeds.air.T, values: [20 degC]}\n", FIRST + 1, "paired settings need the same number"),
    ("sweep:\n  combine: pairs\n  vary:\n    - {setting: steps.comp.p_out, values: [2 bar]}\n", FIRST + 1,
     "Did you mean 'paired'?"),
    ("sweep:\n  routes: [one-stag]\n  vary:\n    - {setting: steps.comp.p_out, values: [2 bar]}\n", FIRST + 1,
     "'one-stag' is not a route. Did you mean 'one-stage'"),
    ("sweep:\n  vary:\n    - {setting: steps.comp.stages, values: [1, 2]}\n", FIRST + 2,
     "step comp has intercoolers, which need stages: 2 or more"),
    ("sweep:\n  vary:\n    - {setting: steps.comp.stages, values: [2, 2.5]}\n", FIRST + 2, "whole number"),
    ("sweep:\n  max_variants: 100\n  vary:\n    - setting: steps.comp.p_out\n"
     "      range: {from: 2 bar, to: 11.9 bar, step: 0.1 bar}\n    - setting: feeds.air.T\n"
     "      values: [10 degC, 20 degC]\n", FIRST + 1,
     "the sweep has 200 variants (100 x 2), more than max_variants 100"),
]


@pytest.mark.parametrize("sweep, line, expected", BAD, ids=[f"bad{i}" for i in range(len(BAD))])
def test_bad_sweep_section_names_file_line_and_fix(tmp_path, sweep, line, expected):
    err = _problems(tmp_path, sweep)
    assert expected in str(err), str(err)
    assert any(p.location.line == line and expected in p.message for p in err.problems), \
        [(p.location.line, p.message) for p in err.problems]


def test_every_problem_of_a_sweep_at_once(tmp_path):
    err = _problems(tmp_path, "sweep:\n  vary:\n    - {setting: steps.compp.p_out, values: [2 bar]}\n"
                              "    - {setting: feeds.air.Tt, values: [20 degC]}\n")
    assert [p.location.line for p in err.problems] == [FIRST + 2, FIRST + 3]


def test_default_max_variants_guards_a_million(tmp_path):
    err = _problems(tmp_path, "sweep:\n  vary:\n    - setting: steps.comp.p_out\n"
                              "      range: {from: 2 bar, to: 101.9 bar, step: 0.1 bar}\n"
                              "    - setting: feeds.air.T\n      range: {from: 0 degC, to: 99.9 degC, step: 0.1 K}\n")
    assert "the sweep has 1,000,000 variants (1000 x 1000), more than max_variants 5,000" in str(err)


def test_grid_and_paired_counts_and_values(tmp_path):
    _, sc = _load(tmp_path, """\
        sweep:
          vary:
            - setting: steps.comp.p_out
              range: {from: 2 bar, to: 4 bar, step: 0.5 bar}
            - setting: steps.comp.efficiency
              range: {from: 0.6, to: 0.8, step: 0.1}
            - setting: feeds.air.flow
              log_range: {from: 1 kg/s, to: 100 kg/s, points: 3}
        """)
    spec = sc.sweep
    assert spec.count == 5 * 3 * 3 and spec.combine == "grid" and spec.routes == ("one-stage", "two-stage")
    assert spec.axes[0].values == (2e5, 2.5e5, 3e5, 3.5e5, 4e5)
    assert spec.axes[1].values == (0.6, 0.7, 0.8)  # the end value is kept although 0.6 + 2 x 0.1 != 0.8 exactly
    assert spec.axes[2].values == pytest.approx((1.0, 10.0, 100.0), rel=1e-12) and spec.axes[2].kind == "mass_flow"
    variants = list(iter_variants(spec))
    assert len(variants) == spec.count
    assert variants[0].values == (2e5, 0.6, 1.0) and variants[1].values[2] == pytest.approx(10.0)
    assert variants[-1].values == (4e5, 0.8, 100.0)  # the first axis varies slowest
    _, sc = _load(tmp_path, """\
        sweep:
          combine: paired
          routes: two-stage
          vary:
            - {setting: steps.comp.p_out, values: [2 bar, 3 bar, 4 bar]}
            - {setting: steps.cooler.T_out, values: [20 degC, 25 degC, 30 degC]}
        """)
    assert sc.sweep.count == 3 and sc.sweep.routes == ("two-stage",)
    assert [v.values for v in iter_variants(sc.sweep)][1] == (3e5, 298.15)


def test_variant_scenario_replaces_only_the_swept_settings(tmp_path):
    _, sc = _load(tmp_path, """\
        sweep:
          routes: [two-stage]
          vary:
            - {setting: steps.comp.ratio, values: [4, 6]}
            - {setting: feeds.air.flow, values: [36 kmol/h]}
            - {setting: limits.max_discharge_T, values: [120 degC]}
            - {setting: steps.comp.stages, values: [3]}
        """)
    v = list(iter_variants(sc.sweep))[1]
    var = variant_scenario(sc, v)
    assert [r.id for r in var.routes] == ["two-stage"] and var.sweep is None
    comp = var.route("two-stage").step("comp")
    assert comp.params["ratio"] == 6.0 and "p_out" not in comp.params  # one of an exclusive group replaces the other
    assert comp.params["stages"] == 3 and isinstance(comp.params["stages"], int)
    assert comp.params["intercool_T"] == pytest.approx(303.15) and comp.params["efficiency"] == 0.8
    assert var.feed("air").flow_molar == pytest.approx(10.0) and var.feed("air").flow_mass is None
    assert var.limits.max_discharge_T == pytest.approx(393.15) and var.limits.pump_subcooling == sc.limits.pump_subcooling
    base_comp = sc.route("two-stage").step("comp")  # the validated scenario is unchanged
    assert base_comp.params["p_out"] == 3e5 and "ratio" not in base_comp.params and len(sc.routes) == 2


def test_bundled_sweeps_have_the_asked_sizes():
    from pathlib import Path

    root = Path(__file__).resolve().parents[2] / "scenarios"
    ext = load_scenario(root / "co2_extraction_loop.yaml").sweep
    assert ext.count >= 400 and [a.kind for a in ext.axes] == ["pressure", "temperature"]
    assert min(ext.axes[0].values) < 7.3773e6 < max(ext.axes[0].values)  # pc of CO2, Span & Wagner 1996 Table 3
    cond = load_scenario(root / "captured_co2_conditioning.yaml").sweep
    assert [a.name for a in cond.axes] == ["steps.compressor.stages", "steps.compressor.intercool_T"]


def test_documented_sweep_example_loads_with_the_bundled_extraction_loop():
    from pathlib import Path

    root = Path(__file__).resolve().parents[2]
    doc = (root / "docs" / "scenario-format.md").read_text(encoding="utf-8")
    example = doc.split("## Design-space sweeps", 1)[1].split("```yaml\n", 1)[1].split("```", 1)[0]
    base = (root / "scenarios" / "co2_extraction_loop.yaml").read_text(encoding="utf-8").split("\nsweep:")[0]
    sc = load_scenario(base + "\n" + example, name_hint="doc-sweep")
    assert sc.sweep.count == 8 * 3 * 5 * 2 and sc.sweep.axes[1].targets == ("steps.hp-pump.p_out",
                                                                            "steps.fresh-pump.p_out")
