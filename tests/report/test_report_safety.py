"""Report safety: scenario text cannot inject markup or script; nothing is loaded from the network."""
import re



def test_scenario_text_appears_only_escaped(hostile_report, inject_strings):
    _, html, _ = hostile_report
    for s in inject_strings:
        assert s not in html
    # the only <script> elements are plotly.js, and our figure code: count them
    assert html.count("<script>") == 2
    assert html.count("</script>") == 2
    assert "<img" not in html and "<svg onload" not in html


def test_report_loads_no_remote_resource(hostile_report):
    _, html, _ = hostile_report
    assert not re.search(r"<(script|link|img|iframe)[^>]+(src|href)\s*=\s*['\"]?https?://", html, re.I)
    assert "@import" not in html


def test_report_content_sections(hostile_report):
    run, html, _ = hostile_report
    for section in ("Read this first", "At a glance", "Where the routes go", "Side by side", "Route route-a"):
        assert section in html
    assert "screening tool, not a design" in html and "asphyxiant" in html
    assert run.scenario.source_hash in html
    assert "supercrit 0.1.0" in html
