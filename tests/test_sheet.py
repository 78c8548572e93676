"""The batch-plan sheet: the PDF says what the PlanResult says, has its chart, fits two pages and renders.

The checks read the PDF back with pypdf (an independent PDF parser) and render it with poppler's
pdftoppm; the numbers are compared with the PlanResult the sheet was made from.
"""

from __future__ import annotations

import dataclasses
import hashlib
import io
import os
import re
import shutil
import subprocess

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from pypdf import PdfReader

from procplan.caution import CAUTION
from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.files.plan import plan_to_toml
from procplan.files.site import SiteSettings, load_site
from procplan.output.chart import nice_ticks, spread_positions
from procplan.output.report import format_f
from procplan.output.sheet import batch_sheet_pdf, printable
from procplan.output.sheet_data import ACTION_IF_MISSED, checkpoints, plan_hash, stage_deadlines
from procplan.run.engine import run_plan

#: Coarse grid: the sheet's content, not the solver's accuracy, is under test here.
N_NODES = 12
PLANS = ("roulade-blast-chill", "vial-excursion", "soup-pouch-pasteurise")


@pytest.fixture(scope="module")
def lib():
    return load_library()


@pytest.fixture(scope="module")
def site():
    return load_site()


@pytest.fixture(scope="module")
def results(lib):
    return {name: run_plan(lib.plan(name), library=lib, n_nodes=N_NODES) for name in PLANS}


@pytest.fixture(scope="module")
def sheets(results, site):
    return {
        name: batch_sheet_pdf(r, site=site, lot_id="L-0307", prepared_by="A. Planner", date="2026-03-02")
        for name, r in results.items()
    }


def _pages_text(pdf: bytes) -> list[str]:
    reader = PdfReader(io.BytesIO(pdf))
    return [" ".join(page.extract_text().split()) for page in reader.pages]


def _text(pdf: bytes) -> str:
    return " ".join(_pages_text(pdf))


def test_sheet_states_the_result_it_was_made_from(results, sheets, site):
    for name, r in results.items():
        text = _text(sheets[name])
        oc = r.outcomes
        hist = r.history
        for sr in r.steps:
            end = hist[hist["step_index"] == sr.index].iloc[-1]
            ends = " / ".join(site.format_temperature(end[k]) for k in ("core_C", "surface_C", "mean_C"))
            assert ends in text, (name, ends)
        for tg in oc.targets:
            if tg.target.reached:
                sr = next(s for s in r.steps if s.name == tg.step)
                assert site.format_time_hm((tg.target.time_s - sr.start_s) / 60.0) in text, name
                assert site.format_time_hm(tg.margin.plan_min) in text, name
        if oc.rule_check is not None:
            verdict = "PASS" if oc.rule_check.passed else "FAIL"
            assert f"{oc.rule_check.rule_name}: {verdict}" in text, name
            for s in oc.rule_check.stages:
                assert site.format_time_hm(s.used_min) in text, name
        if oc.lethality is not None:
            assert f"{format_f(oc.lethality.total_F_min)} min" in text, name
            assert ("PASS" if oc.lethality.passed else "FAIL") in text, name
        assert plan_hash(r.plan) in text.replace(" ", "") or plan_hash(r.plan) in text, name


def test_expected_values_of_the_demo_results(results, sheets):
    # Regression on the demo data (coarse grid): the roulade passes the Food Code, the vial excursion
    # stays within the product's 24 h stability budget above 8 °C (6.5 h used before it); the soup's 400
    # pouches pull the 36 kW bath below its set point, so the loaded batch falls short of the 6-log
    # non-proteolytic C. botulinum F of 10 min (one pouch at the set point reaches it), and the sheet says why.
    assert "us-food-code-two-stage: PASS" in _text(sheets["roulade-blast-chill"])
    vial = _text(sheets["vial-excursion"])
    assert "vaccine-vial-10ml-stability: PASS" in vial and "Stability budget" in vial
    assert "Mean kinetic temperature (surface)" in vial
    soup = _text(sheets["soup-pouch-pasteurise"])
    assert not results["soup-pouch-pasteurise"].outcomes.lethality.passed
    assert "cannot hold 92 °C" in " ".join(soup.split())
    assert "c-botulinum-nonproteolytic-6log" in soup and "10 min" in soup


def test_caution_and_header_on_every_page(sheets, site):
    caution = " ".join(printable(CAUTION).split())
    for name, pdf in sheets.items():
        pages = _pages_text(pdf)
        assert 1 <= len(pages) <= 2, name
        for i, page in enumerate(pages, start=1):
            assert caution in page, (name, i)
            assert f"Page {i} of {len(pages)}" in page
            assert site.plant in page


def test_chart_is_vector_graphics_with_labelled_axes(results, sheets):
    for name, pdf in sheets.items():
        text = _text(pdf)
        assert "Temperature [°C]" in text and "Time from the start of the plan [min]" in text, name
        content = b"".join(p.get_contents().get_data() for p in PdfReader(io.BytesIO(pdf)).pages)
        # each history point adds one line-to per series (core, surface, mean) in the chart's paths
        n_lineto = len(re.findall(rb"[\d.\-]+ [\d.\-]+ l\b", content))
        assert n_lineto >= 3 * (len(results[name].history) - 1), name
        # the three series are told apart by dash patterns (PDF 'd' operator): dashed and dotted
        assert re.search(rb"\[5 2\.5\] 0 d", content) and re.search(rb"\[\.8 1\.8\] 0 d", content), name


def test_letter_paper_and_fahrenheit_hours_site(results, site):
    r = results["roulade-blast-chill"]
    us = dataclasses.replace(site, temperature_unit="F", time_unit="h")
    pdf = batch_sheet_pdf(r, site=us, paper="letter", date="2026-03-02")
    reader = PdfReader(io.BytesIO(pdf))
    assert len(reader.pages) <= 2
    # Source: ANSI US Letter is 8.5 × 11 in = 612 × 792 pt
    assert_allclose(
        [float(reader.pages[0].mediabox.width), float(reader.pages[0].mediabox.height)], [612, 792], atol=0.01
    )
    text = _text(pdf)
    end_core = float(r.history["core_C"].iloc[-1])
    assert f"{end_core * 9 / 5 + 32:.1f} °F" in text
    assert "Temperature [°F]" in text and "[h]" in text


def test_plan_hash_is_the_sha256_of_the_plan_toml(results):
    # Source: FIPS 180-4 (SHA-256) as implemented by hashlib, over procplan.files.plan.plan_to_toml's text
    r = results["roulade-blast-chill"]
    assert plan_hash(r.plan) == hashlib.sha256(plan_to_toml(r.plan).encode("utf-8")).hexdigest()
    changed = r.plan.with_step(0, stop_when_core_C=4.0)
    assert plan_hash(changed) != plan_hash(r.plan)


def test_checkpoints_follow_the_history_the_margin_and_the_rule(results, site):
    r = results["roulade-blast-chill"]
    cps = checkpoints(r, tolerance_K=site.probe_tolerance_K)
    t = r.history["time_s"].to_numpy()
    assert cps and [c.time_min for c in cps] == sorted(c.time_min for c in cps)
    rule_to = {d.to_C for d in stage_deadlines(r)}
    m = 1.0 + r.plan.checks.margin_percent / 100.0
    for c in cps:
        expected = np.interp(c.time_min * 60.0, t, r.history[f"{c.point}_C"].to_numpy())
        assert_allclose(c.expected_C, expected, atol=1e-9)
        if c.rule:
            assert c.high_C in rule_to and "QA manager" in c.action
        else:
            # cooling: the limit is the prediction at (step time)/(1 + m), never tighter than the probe tolerance
            slow = np.interp(c.time_min * 60.0 / m, t, r.history[f"{c.point}_C"].to_numpy())
            assert_allclose(c.high_C, max(slow, expected + site.probe_tolerance_K), atol=1e-9)
            assert c.high_C >= c.expected_C + site.probe_tolerance_K - 1e-12
    # the Food Code stage-1 deadline is 120 min after the core passes 57 °C (US FDA Food Code §3-501.14(A))
    st1 = r.outcomes.rule_check.stages[0]
    d1 = stage_deadlines(r)[0]
    assert_allclose(d1.deadline_s - r.outcomes.rule_applied_from_s - st1.start_s, 120 * 60.0, atol=1e-9)


def test_band_rule_checkpoints_mark_a_predicted_excursion(results, sheets):
    r = results["vial-excursion"]
    cps = [c for c in checkpoints(r) if c.rule]
    assert cps and all((c.low_C, c.high_C) == (2.0, 8.0) for c in cps)
    text = _text(sheets["vial-excursion"])
    assert "PREDICTED OUTSIDE" in text and ACTION_IF_MISSED in text


def test_pages_render_to_png(sheets, tmp_path):
    exe = shutil.which("pdftoppm")
    if exe is None:
        if os.environ.get("CI"):
            pytest.fail("pdftoppm (poppler-utils) is required in CI")
        pytest.skip("pdftoppm (poppler-utils) is not installed")
    pdf = tmp_path / "sheet.pdf"
    pdf.write_bytes(sheets["roulade-blast-chill"])
    subprocess.run([exe, "-png", "-r", "40", str(pdf), str(tmp_path / "page")], check=True, timeout=60)
    pngs = sorted(tmp_path.glob("page*.png"))
    assert 1 <= len(pngs) <= 2
    for p in pngs:
        head = p.read_bytes()[:24]
        assert head[:8] == b"\x89PNG\r\n\x1a\n"
        width, height = int.from_bytes(head[16:20], "big"), int.from_bytes(head[20:24], "big")
        # A4 at 40 dpi: 210 mm × 297 mm → 331 × 468 px (±1 px rounding)
        assert_allclose([width, height], [331, 468], atol=1)


def test_bad_arguments_name_the_field(results, site):
    r = results["roulade-blast-chill"]
    for kwargs, field in (
        ({"paper": "legal"}, "paper"),
        ({"date": "2026-13-01"}, "date"),
        ({"revision": ""}, "revision"),
        ({"lot_id": "x" * 41}, "lot_id"),
    ):
        with pytest.raises(InvalidInputError) as info:
            batch_sheet_pdf(r, site=site, **kwargs)
        assert info.value.field == field
    unassessed = dataclasses.replace(r, outcomes=None)
    with pytest.raises(InvalidInputError) as info:
        batch_sheet_pdf(unassessed, site=site)
    assert info.value.field == "result"


def test_same_input_gives_the_same_bytes(results, site):
    r = results["vial-excursion"]
    a = batch_sheet_pdf(r, site=site, date="2026-03-02")
    b = batch_sheet_pdf(r, site=site, date="2026-03-02")
    assert a == b


def test_long_texts_wrap_inside_two_pages(results, site):
    r = results["roulade-blast-chill"]
    long = "very long product description " * 12
    plan = dataclasses.replace(
        r.plan, title="A title " * 20, product=dataclasses.replace(r.plan.product, description=long)
    )
    pdf = batch_sheet_pdf(
        dataclasses.replace(r, plan=plan), site=SiteSettings("P" * 60, address="A" * 200), date="2026-03-02"
    )
    assert len(PdfReader(io.BytesIO(pdf)).pages) <= 2


def test_printable_replaces_missing_glyphs():
    assert printable("57 → 21 °C") == "57 to 21 °C"
    assert "?" not in printable("≤ 5 °C, ≥ 70 °C, 1.5 h — ok")


@settings(max_examples=60, deadline=None)
@given(
    st.lists(st.floats(min_value=0.0, max_value=200.0), min_size=1, max_size=8),
    st.floats(min_value=1.0, max_value=15.0),
)
def test_spread_labels_never_overlap(wanted, gap):
    # Invariant: labels at least ``gap`` apart, and inside the band when there is room for all of them
    lo, hi = 0.0, 200.0
    pos = spread_positions(wanted, gap, lo, hi)
    s = sorted(pos)
    assert all(b - a >= gap - 1e-6 for a, b in zip(s, s[1:], strict=False))
    if gap * (len(wanted) - 1) <= hi - lo:
        assert min(pos) >= lo - 1e-6 and max(pos) <= hi + 1e-6


@settings(max_examples=60, deadline=None)
@given(st.floats(min_value=-100.0, max_value=300.0), st.floats(min_value=0.01, max_value=5000.0))
def test_nice_ticks_cover_the_range(lo, span):
    ticks = nice_ticks(lo, lo + span)
    steps = np.diff(ticks)
    # covered up to a round-off of 1e-6 tick steps (nice_ticks snaps values within 1e-9 steps of a tick)
    assert ticks[0] <= lo + 1e-6 * steps[0] and ticks[-1] >= lo + span - 1e-6 * steps[0]
    assert_allclose(steps, steps[0], rtol=1e-6)
    mantissa = steps[0] / 10 ** np.floor(np.log10(steps[0]))
    assert any(abs(mantissa - m) < 1e-6 for m in (1.0, 2.0, 2.5, 5.0, 10.0))
