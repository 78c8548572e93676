"""``procplan run`` prints in the display units of the library's site settings."""

from __future__ import annotations

import re
import shutil

from procplan.cli.main import main
from procplan.files.library import load_library
from procplan.files.site import DEFAULT_SITE_FILE


def _library_with_units(tmp_path, temperature: str, time: str):
    root = tmp_path / "library"
    shutil.copytree(load_library().root, root)
    text = DEFAULT_SITE_FILE.read_text(encoding="utf-8")
    text = re.sub(r'(?m)^temperature = "C"', f'temperature = "{temperature}"', text)
    text = re.sub(r'(?m)^time = "min"', f'time = "{time}"', text)
    (root / "site.toml").write_text(text, encoding="utf-8")
    return root


def test_run_prints_fahrenheit_and_hours_for_such_a_site(tmp_path, capsys):
    root = _library_with_units(tmp_path, "F", "h")
    assert main(["--library", str(root), "run", "roulade-blast-chill"]) == 0
    out = capsys.readouterr().out
    # Source: US FDA Food Code 2022 §3-501.14(A): 135 °F → 70 °F within 2 h, → 41 °F within 6 h in total.
    assert "stage 1 135 °F → 70 °F within 2.00 h" in out and "stage 2 70 °F → 41 °F within 6.00 h" in out
    assert "start 165.2 °F" in out  # the plan starts at 74 °C = 165.2 °F
    assert re.search(r"end: core -?[\d.]+ °F, surface -?[\d.]+ °F, mean -?[\d.]+ °F", out)
    assert re.search(r"medium -?[\d.]+ °F, h", out) and re.search(
        r"core reaches [\d.]+ °F after [\d.]+ h", out
    )
    assert "69.8" not in out


def test_run_prints_celsius_for_the_demo_site(capsys):
    assert main(["run", "roulade-blast-chill"]) == 0
    out = capsys.readouterr().out
    assert "stage 1 57 °C → 21 °C within 120.0 min" in out and "start 74.0 °C" in out
