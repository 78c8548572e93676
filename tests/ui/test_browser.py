"""End to end in a real headless browser: start `streamlit run app.py`, change a machine setting, see the
predicted time change, download the batch-plan sheet and check that it is a PDF."""

from __future__ import annotations

import os
import re
import shutil
import signal
import socket
import subprocess
import sys
import time
from pathlib import Path

import pytest

CHROMIUM = Path("/usr/bin/chromium")
ROOT = Path(__file__).resolve().parents[2]
ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _minutes(text: str) -> float:
    m = re.search(r"(\d+(?:\.\d+)?) min", text)
    assert m, text
    return float(m.group(1))


def _time_to_target(page) -> float:
    metric = page.locator('[data-testid="stMetric"]').filter(has_text="Time to target").first
    return _minutes(metric.locator('[data-testid="stMetricValue"]').inner_text())


def _idle(page, timeout_ms: int = 120_000) -> None:
    """Wait until the script run has finished (the 'running' status widget is gone)."""
    time.sleep(0.8)
    page.wait_for_function(
        "() => !document.querySelector('[data-testid=\"stStatusWidget\"]')", timeout=timeout_ms
    )


@pytest.mark.browser
def test_setting_change_and_sheet_download_in_a_real_browser(tmp_path):
    if not CHROMIUM.exists():
        if os.environ.get("CI"):
            pytest.fail("/usr/bin/chromium is missing on CI (install Debian's chromium)")
        pytest.skip("/usr/bin/chromium is missing (install Debian's chromium to run the browser test)")
    from playwright.sync_api import sync_playwright

    from procplan.files.library import DEMO_LIBRARY

    library = tmp_path / "product_library"
    shutil.copytree(DEMO_LIBRARY, library)
    port = _free_port()
    env = {**os.environ, "PROCPLAN_LIBRARY": str(library)}
    log = open(tmp_path / "streamlit.log", "w")  # noqa: SIM115 - closed in finally
    proc = subprocess.Popen(
        [
            sys.executable, "-m", "streamlit", "run", "app.py",
            "--server.port", str(port), "--server.address", "127.0.0.1", "--server.headless", "true",
        ],
        cwd=ROOT, env=env, stdout=log, stderr=subprocess.STDOUT,
    )  # fmt: skip
    try:
        with sync_playwright() as p:
            browser = p.chromium.launch(executable_path=str(CHROMIUM), args=ARGS)
            try:
                page = browser.new_page(viewport={"width": 1400, "height": 1000}, accept_downloads=True)
                deadline = time.time() + 90
                while True:
                    try:
                        page.goto(f"http://127.0.0.1:{port}", timeout=5000)
                        break
                    except Exception:
                        if time.time() > deadline or proc.poll() is not None:
                            raise
                        time.sleep(0.5)
                page.wait_for_selector("text=Time to target", timeout=150_000)
                before = _time_to_target(page)
                sidebar = page.locator('[data-testid="stSidebar"]')
                sidebar.get_by_text("Process", exact=True).click()
                _idle(page)
                air = page.get_by_label(re.compile(r"^Air temperature")).first
                air.fill("-15")
                air.press("Enter")
                _idle(page)
                page.wait_for_function(
                    "(before) => [...document.querySelectorAll('[data-testid=\"stMetric\"]')]"
                    ".some(m => m.innerText.includes('Time to target') && !m.innerText.includes(before + ' min'))",
                    arg=f"{before:g}",
                    timeout=120_000,
                )
                after = _time_to_target(page)
                assert after < before, (before, after)
                sidebar.get_by_text("Sheet & files", exact=True).click()
                page.wait_for_selector(
                    "text=/Download the batch-plan sheet/",
                    timeout=120_000,
                )
                button = page.get_by_role("button", name="Download the batch-plan sheet")
                if button.count() == 0:
                    pytest.skip("procplan.output.sheet is not in this build")
                with page.expect_download(timeout=60_000) as info:
                    button.click()
                pdf = Path(info.value.path()).read_bytes()
                assert pdf.startswith(b"%PDF")
            finally:
                browser.close()
    finally:
        proc.send_signal(signal.SIGTERM)
        try:
            proc.wait(timeout=15)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait(timeout=5)
        log.close()
