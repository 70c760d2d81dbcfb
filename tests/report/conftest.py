"""Shared: a small report built once per session (ideal gas, no recycle: fast)."""
import pytest

from supercrit.runner import build_report_html, run_scenario

INJECT = [  # each payload, if it ever ran, would mark the document with a data-pwned attribute
    "<script>document.documentElement.setAttribute(`data-pwned`,`1`)</script>",
    '"><img src=x onerror="document.documentElement.setAttribute(`data-pwned`,`2`)">',
    "</script><script>document.documentElement.setAttribute(`data-pwned`,`3`)</script>",
    "<svg onload=document.documentElement.setAttribute(`data-pwned`,`4`)>",
]

HOSTILE = f"""
name: 'x {INJECT[0]} {INJECT[2]}'
description: '{INJECT[1]} {INJECT[3]}'
fluid: {{components: N2, model: peng-robinson}}
feed: {{T: 20 degC, p: 5 bar, flow: 1 kg/s}}
routes:
  - id: route-a
    description: '{INJECT[1]}'
    steps:
      - {{id: f, kind: feed}}
      - {{id: comp, kind: compress, p_out: 15 bar, efficiency: 0.8}}
      - {{id: cooler, kind: cool, T_out: 25 degC}}
      - {{id: end, kind: sink, name: '{INJECT[3]}'}}
"""


@pytest.fixture(scope="session")
def inject_strings():
    return INJECT


@pytest.fixture(scope="session")
def hostile_report(tmp_path_factory):
    run = run_scenario(HOSTILE)
    html = build_report_html(run, generated="2026-01-01 00:00 UTC")
    path = tmp_path_factory.mktemp("report") / "hostile.html"
    path.write_text(html, encoding="utf-8")
    return run, html, path
