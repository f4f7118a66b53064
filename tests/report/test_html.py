"""report.html: rendered in headless Chromium, and holding the run's numbers, warnings and any new block.

The tiny run of conftest.py (not converged, so it has warnings) with two
stand-in figures: a line plot embedded as SVG and a dense scatter as PNG.
"""

import copy
import struct

import pytest
from browser import Chromium, find_chromium
from markupsafe import escape

from planetfit import pipeline
from planetfit.report import captions, html, tables
from planetfit.report.rounding import value_text
from planetfit.report.summary_types import Stat, Summary

#: The issue's limit on the page's size.
# common practice, no published source: the project's own bound on one emailable page (its issue asks < 15 MB).
MAX_REPORT_BYTES = 15_000_000


@pytest.fixture(scope="module")
def run(tiny_run):
    """The tiny run (conftest.py), its report as the run wrote it, and the rows of its parameter table."""
    run_dir, summary = tiny_run["dir"], tiny_run["typed"]
    checked = pipeline.check(run_dir / "config.resolved.yaml", output=run_dir)
    rows = tables.table_rows(summary, checked.log_probability.model, checked.config.star)
    return {**tiny_run, "report": (run_dir / "report.html").read_text(), "rows": rows}


def test_report_opens_in_chromium_with_every_figure_drawn(run, tmp_path):
    executable = find_chromium()
    if executable is None:
        pytest.skip("no Chromium installed (Debian: apt-get install chromium); report.html not rendered")
    page = run["dir"] / "report.html"
    browser = Chromium(executable)
    try:
        seen = browser.load(page.as_uri(), tmp_path / "report.png")
    finally:
        browser.close()
    # common practice, no published source: a self-contained page loads nothing but itself and its data: URIs,
    # logs no console error, and shows every figure at a non-zero size (no physics is checked here).
    assert seen["failed"] == [] and seen["errors"] == [], seen
    # Self-contained: the page itself, and its figures as data URIs, are all it asks for.
    assert {u for u in seen["requests"] if not u.startswith("data:image/")} == {page.as_uri()}
    pngs = sorted(p.stem for p in (run["dir"] / "figures").glob("*.png"))
    assert sorted(f["alt"] for f in seen["figures"]) == pngs == ["line", "scatter"]
    assert run["report"].count("data:image/svg+xml;base64,") == 1 and run["report"].count("data:image/png;") == 1
    for f in seen["figures"]:
        assert f["complete"] and min(f["natural"]) > 0 and min(f["shown"]) > 50, f
    width, height = struct.unpack(">II", (tmp_path / "report.png").read_bytes()[16:24])
    assert (width, height) == tuple(round(x) for x in seen["size"]) and height > 2000


def test_report_holds_the_system_each_planets_mass_and_radius_and_every_warning(run):
    page, summary = run["report"], run["summary"]
    assert len(page.encode()) < MAX_REPORT_BYTES
    assert f"<h1>{summary['system']}</h1>" in page
    for planet in summary["planets"].values():
        for key in ("mass_earth", "radius_earth"):
            assert f"<b>{value_text(Stat.from_json(planet[key]))}</b>" in page, key
    warnings = summary["sampling"]["warnings"]
    assert warnings, "the 200-step tiny run should not have converged"
    for warning in warnings:
        assert str(escape(warning)) in page
    assert f"Warnings ({len(warnings)})" in page
    for forbidden in ("<script", "<link", 'src="http', "url(http", "@import"):
        assert forbidden not in page


def test_blocks_the_page_has_no_words_for_still_appear(run):
    summary = copy.deepcopy(run["summary"])
    summary["dynamics"] = {"p_hill_stable": 0.931, "p_orbits_cross": 0.0}
    summary["planets"]["b"]["planet_light"] = {
        "band-x": {"eclipse_depth_ppm": {"median": 41.5, "lower": 30.1, "upper": 52.9}}
    }
    summary["sampling"]["ln_evidence"] = {"value": -1234.5, "error": 0.3}
    page = html.render(Summary.from_json(summary), run["rows"], run["dir"] / "figures")
    for text in ("dynamics", "p_hill_stable", "0.931", "planet_light", "eclipse_depth_ppm", "ln_evidence", "-1234"):
        assert text in page, text
    assert value_text(Stat(41.5, 30.1, 52.9)) in page


def test_a_run_without_figures_says_so(run, tmp_path):
    page = html.render(run["typed"], run["rows"], tmp_path / "no-figures")
    assert "No figures were drawn for this run" in page and "<img" not in page


def test_figures_are_ordered_for_reading_and_new_ones_keep_a_caption():
    drawn = [
        captions.Drawn("convergence"),
        captions.Drawn("corner_sampled"),
        captions.Drawn("corner", "b"),
        captions.Drawn("phase_curve", "b"),
        captions.Drawn("transit", "b", "cam"),
        captions.Drawn("rv_time"),
    ]
    assert [f.stem for f in captions.order(drawn)] == [
        "transit_b_cam",
        "rv_time",
        "corner_b",
        "phase_curve_b",
        "corner_sampled",
        "convergence",
    ]
    transit = captions.Drawn("transit", "b_1", "camera 2min")  # names that file stems change or make ambiguous
    assert transit.stem == "transit_b_1_camera_2min"
    assert transit.caption.startswith("Transits of planet b_1 in camera 2min,")
    assert captions.Drawn("phase_curve", "b").caption == "Figure phase_curve_b (see figures/phase_curve_b.pdf)."
