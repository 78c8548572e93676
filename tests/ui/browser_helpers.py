"""Shared helpers of the real-browser tests: start `streamlit run app.py` on a free port with a copy of the demo
library, open it in headless Chromium (Debian's /usr/bin/chromium through playwright), and read the page."""

from __future__ import annotations

import os
import re
import shutil
import signal
import socket
import subprocess
import sys
import time
from collections.abc import Iterator
from contextlib import contextmanager
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


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def minutes(text: str) -> float:
    m = re.search(r"(\d+(?:\.\d+)?) min", text)
    assert m, text
    return float(m.group(1))


def time_to_target(page) -> float:
    metric = page.locator('[data-testid="stMetric"]').filter(has_text="Time to target").first
    return minutes(metric.locator('[data-testid="stMetricValue"]').inner_text())


def idle(page, timeout_ms: int = 120_000) -> None:
    """Wait until the script run has finished (the 'running' status widget is gone)."""
    time.sleep(0.8)
    page.wait_for_function(
        "() => !document.querySelector('[data-testid=\"stStatusWidget\"]')", timeout=timeout_ms
    )


def wait_time_to_target_changes(page, before: float, timeout_ms: int = 120_000) -> float:
    """The time to target once the metric no longer shows ``before`` minutes."""
    page.wait_for_function(
        "(before) => [...document.querySelectorAll('[data-testid=\"stMetric\"]')]"
        ".some(m => m.innerText.includes('Time to target') && !m.innerText.includes(before + ' min'))",
        arg=f"{before:g}",
        timeout=timeout_ms,
    )
    return time_to_target(page)


def go(page, title: str) -> None:
    """Open a page of the app through the sidebar navigation."""
    page.locator('[data-testid="stSidebar"]').get_by_text(title, exact=True).click()
    idle(page)


def require_chromium() -> None:
    if not CHROMIUM.exists():
        if os.environ.get("CI"):
            pytest.fail("/usr/bin/chromium is missing on CI (install Debian's chromium)")
        pytest.skip("/usr/bin/chromium is missing (install Debian's chromium to run the browser test)")


@contextmanager
def app_page(
    tmp_path: Path,
    *,
    plan_text: str | None = None,
    viewport=(1400, 1000),
    wait_for: str = "text=Time to target",
) -> Iterator:
    """A playwright page on a freshly started app (its own library copy); ``plan_text`` opens that plan through
    the page address, as a reload would."""
    require_chromium()
    from playwright.sync_api import sync_playwright

    from procplan.files.library import DEMO_LIBRARY

    library = tmp_path / "product_library"
    shutil.copytree(DEMO_LIBRARY, library)
    port = free_port()
    env = {**os.environ, "PROCPLAN_LIBRARY": str(library)}
    url = f"http://127.0.0.1:{port}"
    if plan_text is not None:
        from procplan.ui.state import PLAN_PARAM, encode_plan

        url += f"/?{PLAN_PARAM}={encode_plan(plan_text)}"
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
                page = browser.new_page(
                    viewport={"width": viewport[0], "height": viewport[1]}, accept_downloads=True
                )
                deadline = time.time() + 90
                while True:
                    try:
                        page.goto(url, timeout=5000)
                        break
                    except Exception:
                        if time.time() > deadline or proc.poll() is not None:
                            raise
                        time.sleep(0.5)
                if wait_for:
                    page.wait_for_selector(wait_for, timeout=150_000)
                yield page
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
