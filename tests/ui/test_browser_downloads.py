"""Every download of the app in a real headless browser: the workbook (read back with openpyxl), the plan
file, the history CSV, the result JSON and a chart as PNG from the chart's own camera button."""

from __future__ import annotations

import io
import json
import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from tests.ui.test_browser import ARGS, CHROMIUM, ROOT, _free_port, _idle


def _download(page, name: str) -> bytes:
    with page.expect_download(timeout=120_000) as info:
        page.get_by_role("button", name=name).click()
    return Path(info.value.path()).read_bytes()


@pytest.mark.browser
def test_every_download_opens(tmp_path):
    if not CHROMIUM.exists():
        if os.environ.get("CI"):
            pytest.fail("/usr/bin/chromium is missing on CI (install Debian's chromium)")
        pytest.skip("/usr/bin/chromium is missing (install Debian's chromium to run the browser test)")
    import openpyxl
    from playwright.sync_api import sync_playwright

    from procplan.caution import CAUTION
    from procplan.files.library import DEMO_LIBRARY
    from procplan.files.tomlfile import parse_toml

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
                _idle(page)
                # a chart as PNG through its own toolbar (plotly draws the image in the browser)
                chart = page.locator('[data-testid="stPlotlyChart"]').first
                chart.hover()
                with page.expect_download(timeout=60_000) as info:
                    chart.locator('.modebar-btn[data-title^="Download plot"]').first.click()
                assert Path(info.value.path()).read_bytes().startswith(b"\x89PNG\r\n\x1a\n")
                assert info.value.suggested_filename == "temperatures.png"

                page.locator('[data-testid="stSidebar"]').get_by_text("Sheet & files", exact=True).click()
                page.wait_for_selector("text=/Download the workbook/", timeout=120_000)
                _idle(page)
                book = openpyxl.load_workbook(io.BytesIO(_download(page, "Download the workbook")))
                assert book.sheetnames == ["About", "Summary", "History"]
                assert [c.value for c in book["History"][1]][:3] == ["time [s]", "time [min]", "core [°C]"]
                assert any(CAUTION in str(r[1]) for r in book["About"].iter_rows(values_only=True))
                plan = parse_toml(_download(page, "Download the plan file").decode(), "plan")
                assert plan["steps"][0]["equipment"] == "chiller-b2"
                csv = _download(page, "Download the history").decode()
                assert csv.splitlines()[0].startswith("time_s,time_min,core_C")
                doc = json.loads(_download(page, "Download the result"))
                assert doc["schema"] == "procplan-result" and doc["summary"]["steps"]
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
