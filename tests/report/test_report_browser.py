"""Open reports in headless Chromium (Debian package 'chromium'): no console errors, every plot drawn with
its traces, and a screenshot. Skipped, with the reason, where Chromium is not installed."""
import re
import shutil
import subprocess
from pathlib import Path

import pytest

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--host-resolver-rules=MAP * ~NOTFOUND",  # the network is disabled for the page
         "--virtual-time-budget=20000", "--enable-logging=stderr", "--v=0"]
FIGURES = ("fig-pt", "fig-ph", "fig-ts", "fig-rho", "fig-compare")


def open_in_chromium(path: Path, tmp: Path, screenshot: Path | None = None):
    """Run Chromium on a file: returns (dom text, console error lines)."""
    if CHROMIUM is None:
        pytest.skip("Chromium is not installed (Debian: apt-get install chromium); .ci/run installs it")
    args = [CHROMIUM, *FLAGS, f"--user-data-dir={tmp / 'profile'}"]
    dom = subprocess.run(args + ["--dump-dom", path.as_uri()], capture_output=True, text=True, timeout=180)
    errors = [ln for ln in dom.stderr.splitlines() if "CONSOLE" in ln and ("Error" in ln or "error" in ln)]
    errors += [ln for ln in dom.stderr.splitlines() if "Uncaught" in ln]
    if screenshot is not None:
        subprocess.run(args + ["--window-size=1400,2400", f"--screenshot={screenshot}", path.as_uri()],
                       capture_output=True, text=True, timeout=180)
    return dom.stdout, errors


def check_rendered(dom: str):
    for fid in FIGURES:
        m = re.search(rf'<div id="{fid}"[^>]*class="fig[^"]*js-plotly-plot', dom)
        assert m, f"{fid} was not drawn"
    # every drawn figure carries traces (plotly gives each trace a <g class="trace ...">)
    assert dom.count('class="trace scatter') >= 10
    assert 'class="trace bars' in dom or "bars" in dom


def test_hostile_report_renders_without_errors_and_runs_no_injected_script(hostile_report, tmp_path):
    _, _, path = hostile_report
    dom, errors = open_in_chromium(path, tmp_path, tmp_path / "shot.png")
    assert not errors, errors
    check_rendered(dom)
    assert "data-pwned=" not in dom  # no injected script or handler ran
    assert not re.search(r"<img[^>]+onerror", dom)
    assert (tmp_path / "shot.png").stat().st_size > 10000


def test_the_injection_detector_detects_a_raw_payload(tmp_path, inject_strings):
    """Control: the same payload written raw into a page does run and is seen (so the test above can fail)."""
    page = tmp_path / "raw.html"
    page.write_text(f"<!DOCTYPE html><html><body><p>{inject_strings[1]}</p></body></html>", encoding="utf-8")
    dom, _ = open_in_chromium(page, tmp_path)
    assert 'data-pwned="2"' in dom
