"""Scenario loading: good files give the expected SI values; every bad file gives one clear ScenarioError."""
import re
from pathlib import Path

import pytest
import yaml

from supercrit.errors import InputError
from supercrit.io import (MAX_NODES, Location, YamlError, YamlList, YamlMap, load_yaml, sanitize_name,
                          write_atomic)
from supercrit.scenario import STEP_KINDS, PortRef, ScenarioError, load_scenario
from supercrit.scenario.schema import LIMIT_FIELDS, Limits

HERE = Path(__file__).parent
BAD = sorted((HERE / "bad").glob("*.yaml"))
GOOD = HERE / "good"


def test_there_are_at_least_30_bad_files():
    assert len(BAD) >= 30


@pytest.mark.parametrize("path", BAD, ids=[p.stem for p in BAD])
def test_bad_scenario_gives_clear_error(path):
    first = path.read_bytes().split(b"\n", 1)[0].decode("utf-8")
    expected = first.split("# expect:", 1)[1].strip()
    with pytest.raises(ScenarioError) as info:
        load_scenario(path)
    err = info.value
    message = str(err)
    assert isinstance(err, InputError)
    assert expected in message, message
    assert err.problems, "no problem listed"
    for problem in err.problems:  # every problem names the file, a line and a column
        assert re.match(re.escape(str(path)) + r":\d+:\d+: ", str(problem)), str(problem)
        assert str(problem) in message
    assert "Traceback" not in message


def test_all_problems_of_a_file_at_once():
    with pytest.raises(ScenarioError) as info:
        load_scenario(HERE / "bad" / "multiple_problems.yaml")
    lines = [p.location.line for p in info.value.problems]
    assert len(lines) == 4 and lines == sorted(lines)


def test_extraction_scenario_in_si():
    sc = load_scenario(GOOD / "extraction.yaml")
    assert sc.name == "extraction-demo" and sc.display_units == "engineering"
    assert dict(sc.fluid.components) == pytest.approx({"CO2": 0.97, "C2H5OH": 0.03})
    assert sc.fluid.model == "peng-robinson" and dict(sc.fluid.kij) == {("CO2", "C2H5OH"): 0.089}
    feed = sc.feed("storage")
    assert (feed.T, feed.p, feed.flow_mass, feed.flow_molar) == (pytest.approx(278.15), pytest.approx(55e5),
                                                                  pytest.approx(1200 / 3600), None)
    assert sc.limits.pump_subcooling == 4.0 and sc.limits.max_stage_ratio == 3.5
    base = sc.route("pump-loop")
    pump = base.step("pump-1")
    assert pump.inputs == (PortRef("makeup", "out", "in"),)
    assert dict(pump.params) == {"p_out": 300e5, "efficiency": 0.7}
    assert base.step("makeup").inputs == (PortRef("start", "out", "in1"), PortRef("condenser", "out", "in2"))
    assert dict(base.step("heater-1").params) == {"T_out": pytest.approx(318.15), "dp": 0.5e5}
    vessel = base.step("extractor")
    assert dict(vessel.params["solubility"]) == {"k": 10.724, "a": -18708.0, "b": 40.361}
    assert vessel.params["density_window"] == (700.0, 950.0)
    assert base.step("sep-1").outputs == ("vapor", "liquid")
    assert base.step("product").inputs == (PortRef("sep-1", "liquid"),) and base.step("product").outputs == ()
    cond = base.step("condenser")
    assert dict(cond.limits) == {"min_approach_T": 3.0}
    assert sc.limits_for(cond).min_approach_T == 3.0 and sc.limits_for(pump).min_approach_T == 5.0
    assert (pump.where.line, pump.where.col) == (22, 9)
    assert pump.param_where["p_out"].line == 22
    # derived route: changes, a removed and re-added separator, an added heater after the valve
    alt = sc.route("warm-letdown")
    assert alt.based_on == "pump-loop"
    assert alt.step("heater-1").params["T_out"] == pytest.approx(333.15)
    valve = alt.step("valve-1")
    assert dict(valve.params) == {"dp": 230e5}  # dp replaced p_out (same exclusive group)
    assert alt.step("valve-heater").inputs == (PortRef("valve-1"),)
    assert alt.step("sep-1").inputs == (PortRef("valve-heater"),)
    assert [s.id for s in alt.steps][-2:] == ["valve-heater", "sep-1"]
    assert len(sc.source_hash) == 64


def test_pipeline_scenario_defaults_and_derivations():
    sc = load_scenario(str(GOOD / "co2_pipeline.yaml"))
    assert sc.fluid.model == "span-wagner"  # default for pure CO2
    assert sc.display_units == "US"
    feed = sc.feeds[0]
    assert feed.id == "feed" and feed.p == pytest.approx(0.5e5 + 101325.0) and feed.T == pytest.approx(308.15)
    assert sc.limits.min_metal_T == pytest.approx(227.15) and sc.limits.max_discharge_T == pytest.approx(413.15)
    gas = sc.route("all-gas")
    comp = gas.step("compressor")
    assert comp.params["stages"] == 5 and comp.params["polytropic_efficiency"] == 0.8
    assert "efficiency" not in comp.params  # no isentropic default when polytropic is given
    line = gas.step("line")
    assert line.params["diameter"] == pytest.approx(0.4064) and line.params["roughness"] == pytest.approx(45e-6)
    assert line.params["length"] == 120e3 and line.params["segments"] == 200
    assert gas.step("well").params["elevation_change"] == -1900.0
    liq = sc.route("liquefy-and-pump")
    assert liq.step("aftercooler").params == {"vapor_fraction": 0.0, "dp": 0.0}
    assert liq.step("line").inputs == (PortRef("trim"),)
    assert liq.step("trim").inputs == (PortRef("pump-1"),)
    no_trim = sc.route("no-trim")  # removing a one-in one-out step reconnects its consumer upstream
    assert no_trim.step("line").inputs == (PortRef("pump-1"),)
    assert "trim" not in [s.id for s in no_trim.steps]


def test_power_cycle_ports_and_recycles():
    sc = load_scenario(GOOD / "power_cycle.yaml")
    r = sc.routes[0]
    assert r.step("recup").inputs == (PortRef("turbine", "out", "hot"), PortRef("join", "out", "cold"))
    assert r.step("recup").outputs == ("hot", "cold")
    assert r.step("tee").outputs == ("to-cooler", "to-recomp")
    assert dict(r.step("tee").params["fractions"]) == pytest.approx({"to-cooler": 0.7, "to-recomp": 0.3})
    assert r.step("close").inputs[1] == PortRef("precooler", "out", "in2")  # a later step: a recycle, recorded
    assert r.step("turbine").params == {"ratio": 3.2, "efficiency": 0.9}
    assert r.step("recomp").params["efficiency"] == 0.75  # common-practice default


def test_text_input_and_name_hint():
    text = (GOOD / "power_cycle.yaml").read_text().replace("name: scO2-cycle\n", "")
    sc = load_scenario(text, name_hint="cycle")
    assert sc.name == "cycle" and sc.source_file == "<cycle>"
    with pytest.raises(ScenarioError, match=r"<text>:1:1: "):
        load_scenario("just text\n")


def test_mass_basis_composition():
    text = (GOOD / "power_cycle.yaml").read_text().replace("fluid: {components: {CO2: 1.0}, model: sw}",
                                                            "fluid: {components: {CO2: 0.5, N2: 0.5}, basis: mass}")
    sc = load_scenario(text)
    x_co2 = (0.5 / 44.0098) / (0.5 / 44.0098 + 0.5 / 28.0135)  # molar masses as in components.yaml (g/mol)
    assert sc.fluid.components["CO2"] == pytest.approx(x_co2, rel=1e-4)
    assert sc.fluid.model == "peng-robinson"


def test_step_kind_table_is_consistent():
    for name, kind in STEP_KINDS.items():
        assert kind.name == name
        names = [p.name for p in kind.params]
        assert len(names) == len(set(names))
        for group in kind.exactly_one + kind.at_most_one:
            assert set(group) <= set(names)
    for f in LIMIT_FIELDS.values():  # every default names its basis
        assert f.metadata["source"] and f.metadata["kind"]
    assert Limits().with_overrides({"max_stage_ratio": 3.0}).max_stage_ratio == 3.0


# --- io ----------------------------------------------------------------------------------------------

def test_yaml_locations_and_core_schema():
    data = load_yaml("a: 1\nb:\n  - yes\n  - 1e6\n  - 1:20\n  - ~\n", "f.yaml")
    assert isinstance(data, YamlMap) and isinstance(data["b"], YamlList)
    assert data["b"] == ["yes", 1e6, "1:20", None]  # YAML 1.2 core schema, not 1.1
    assert data.key_where["b"] == Location("f.yaml", 2, 1)
    assert data["b"].item_where[1] == Location("f.yaml", 4, 5)


@pytest.mark.parametrize("text, fragment", [
    ("a: !!python/object/apply:os.system [ls]", "builds no objects"),
    ("a: !!python/name:os.system", "builds no objects"),
    ("a: !!binary aGVsbG8=", "special type"),
    ("a: 1\na: 2", "appears twice"),
    ("<<: {a: 1}", "merge keys"),
    ("a: &x [*x]", "contains the alias itself"),
    ("a: [1, 2", "YAML syntax"),
    ("a:\n\tb: 1", "never tabs"),
    ("? [a, b]\n: 1", "a key must be"),
    ("a: *nope", "anchor"),
])
def test_yaml_refusals(text, fragment):
    with pytest.raises(YamlError) as info:
        load_yaml(text, "f.yaml")
    assert fragment in str(info.value) and str(info.value).startswith("f.yaml:")


def test_yaml_bomb_is_stopped():
    lines = ["a0: &a0 [x, x, x, x, x, x, x, x, x, x]"]
    lines += [f"a{i}: &a{i} [" + ", ".join([f"*a{i - 1}"] * 10) + "]" for i in range(1, 9)]  # 10^9 values
    with pytest.raises(YamlError, match=str(MAX_NODES)):
        load_yaml("\n".join(lines))


def test_deep_nesting_is_stopped():
    with pytest.raises(YamlError, match="nesting deeper"):
        load_yaml("[" * 200 + "]" * 200)


def test_write_atomic(tmp_path):
    target = tmp_path / "out" / "r.json"
    write_atomic(target, "one")
    write_atomic(target, b"two")
    assert target.read_text() == "two"
    assert [p.name for p in target.parent.iterdir()] == ["r.json"]  # no temp file left

    class Boom:
        def __bytes__(self):
            raise RuntimeError("fails while producing the content")

    with pytest.raises(RuntimeError):
        write_atomic(target, Boom())
    assert target.read_text() == "two" and len(list(target.parent.iterdir())) == 1


@pytest.mark.parametrize("name, expected", [
    ("../../etc/passwd", "etc-passwd"), ("a/b\\c", "a-b-c"), ("CO2 extraction: 300 bar", "CO2-extraction-300-bar"),
    ("", "scenario"), ("...", "scenario"), ("con", "con_"), ("-rf", "rf"), ("Café", "Cafe")])
def test_sanitize_name(name, expected):
    assert sanitize_name(name) == expected


def test_sanitize_name_bounded_and_distinct():
    a, b = sanitize_name("x" * 300 + "a"), sanitize_name("x" * 300 + "b")
    assert len(a) <= 64 and len(b) <= 64 and a != b


# --- robustness: random damage gives InputError or a valid scenario, nothing else -------------------------

hypothesis = pytest.importorskip("hypothesis")
from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_BASE_TEXT = (GOOD / "extraction.yaml").read_text()
_BASE_DATA = yaml.safe_load(_BASE_TEXT)
_VALUES = st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6), st.floats(allow_nan=True),
                    st.sampled_from(["45 degC", "300 bar", "2 barg", "12 t/h", "0.75", "x", "", "sep-1.vapor",
                                     "pump-1", "compress", "-5 kg/s", "1e400", "CO2", "45 C"]),
                    st.lists(st.sampled_from(["start", "pump-1", "a", 1]), max_size=3),
                    st.dictionaries(st.sampled_from(["hot", "cold", "k", "a", "id"]), st.sampled_from(["x", 1]),
                                    max_size=2))


def _paths(node, prefix=()):
    yield prefix
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _paths(v, prefix + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _paths(v, prefix + (i,))


_ALL_PATHS = [p for p in _paths(_BASE_DATA) if p]


def _assert_only_input_errors(text):
    try:
        load_scenario(text)
    except ScenarioError as exc:
        assert exc.problems and all(p.location is not None for p in exc.problems)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.sampled_from(_ALL_PATHS), _VALUES, st.booleans()), min_size=1, max_size=4))
def test_random_value_mutations_raise_only_scenario_errors(mutations):
    import copy

    data = copy.deepcopy(_BASE_DATA)
    for path, value, delete in mutations:
        node = data
        try:
            for key in path[:-1]:
                node = node[key]
            if delete:
                del node[path[-1]]
            else:
                node[path[-1]] = value
        except (KeyError, IndexError, TypeError):
            continue
    _assert_only_input_errors(yaml.safe_dump(data, sort_keys=False))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.integers(0, len(_BASE_TEXT) - 1), st.integers(0, 5),
                          st.sampled_from(["", ":", "-", " ", "\t", "[", "{", "&a", "*a", "!!python/object ", "\n",
                                           "'", '"', "x", "0", "%", "."])), min_size=1, max_size=5))
def test_random_text_damage_raises_only_scenario_errors(edits):
    text = _BASE_TEXT
    for pos, cut, insert in edits:
        pos = min(pos, len(text))
        text = text[:pos] + insert + text[pos + cut:]
    _assert_only_input_errors(text)


def test_documented_example_loads():
    doc = (HERE.parents[1] / "docs" / "scenario-format.md").read_text(encoding="utf-8")
    example = doc.split("```yaml\n", 1)[1].split("```", 1)[0]
    sc = load_scenario(example, name_hint="doc-example")
    assert [r.id for r in sc.routes] == ["pump-loop", "warm-letdown"]
    for kind in STEP_KINDS:  # every step kind is documented
        assert f"### `{kind}`" in doc
