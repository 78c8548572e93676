"""Two edits in a real headless browser: a step's medium-temperature profile edited in its table (the predicted
time moves the way physics says), and a long study started, followed on its progress bar and stopped, with the
page usable afterwards."""

from __future__ import annotations

import time

import pytest

from tests.ui.browser_helpers import app_page, go, idle, time_to_target, wait_time_to_target_changes

# A chilled roulade (demo product) in a medium of given h whose temperature follows a profile.
PROFILE_PLAN = """
title = "profile in the browser"
[product]
library = "chicken-roulade"
[start]
temperature_C = 74
[[steps]]
name = "chill"
h_W_m2K = 40
medium_profile = [[0, -8], [60, -8]]
duration_min = 600
stop_when_core_C = 5
"""


def _choose(page, label: str, option: str) -> None:
    """Pick ``option`` in the select box ``label``: type to filter its list, take the first match."""
    box = page.get_by_role("combobox", name=label, exact=True).first
    box.click()
    box.fill(option)
    time.sleep(0.5)
    page.keyboard.press("ArrowDown")
    page.keyboard.press("Enter")
    idle(page)
    assert box.input_value() == option


@pytest.mark.browser
def test_medium_profile_row_edited_in_the_browser(tmp_path):
    with app_page(tmp_path, plan_text=PROFILE_PLAN) as page:
        before = time_to_target(page)
        go(page, "Process")
        grid = page.locator('[data-testid="stDataFrame"]').filter(has_text="medium").first
        grid.scroll_into_view_if_needed()
        idle(page)
        box = grid.bounding_box()
        cell = page.locator("input.gdg-input")  # the grid's cell editor, opened by Enter on a chosen cell
        for _ in range(5):  # the grid draws itself on a canvas: try again until it takes the click
            # first row (under a header row of about 35 px), last column: the medium temperature
            page.mouse.click(box["x"] + box["width"] - 40, box["y"] + 35 + 17)
            page.keyboard.press("Enter")
            try:
                cell.wait_for(timeout=3000)
                break
            except Exception:
                page.keyboard.press("Escape")
        assert cell.input_value() == "-8"
        cell.fill("2")
        cell.press("Enter")
        idle(page)
        after = wait_time_to_target_changes(page, before)
        # Warmer medium over the first hour (−8 → +2 °C): a smaller driving difference, a longer chill.
        # Source: Newton's law of cooling, q = h·A·(T_surface − T_medium) (common practice, any heat-transfer
        # text, e.g. Incropera, Fundamentals of Heat and Mass Transfer, 6th ed., eq. 1.3a).
        assert after > before, (before, after)


@pytest.mark.browser
def test_long_study_shows_progress_stops_and_page_stays_usable(tmp_path):
    t0 = time.time()
    with app_page(tmp_path) as page:
        go(page, "Compare & studies")
        page.get_by_text("Variability", exact=True).scroll_into_view_if_needed()
        _choose(page, "Method", "full model per sample")
        samples = page.get_by_label("Samples").first
        samples.fill("5000")
        samples.press("Enter")
        idle(page)
        page.get_by_role("button", name="Run the variability study").click()
        bar = page.locator('[data-testid="stProgress"]').first
        bar.wait_for(timeout=60_000)
        page.wait_for_selector("text=/\\d+ of 5000 samples|Starting/", timeout=60_000)
        page.get_by_role("button", name="Stop the study").click()
        page.wait_for_selector("text=The study was stopped", timeout=60_000)
        idle(page)
        assert page.locator('[data-testid="stProgress"]').count() == 0
        # the page still answers: a setting changed (a few samples) and the study run again gives its table
        samples.fill("4")
        samples.press("Enter")
        idle(page)
        page.get_by_role("button", name="Run the variability study").click()
        page.wait_for_selector("text=/^4 samples, full model per sample/", timeout=90_000)
        # the table under the summary line may render a moment after it: wait for it, not only count
        page.get_by_text("Target not reached").first.wait_for(timeout=30_000)
        assert page.get_by_text("Target not reached").count() >= 1
        # the study has ended: its stop button is gone with its progress bar
        idle(page)
        assert page.get_by_role("button", name="Stop the study").count() == 0
    assert time.time() - t0 < 120
