"""Lethality as reported: capped log reductions, tabulated checks in a plan, indicative presets and rules."""

from pathlib import Path

import numpy as np
import pandas as pd
from numpy.testing import assert_allclose

from procplan.caution import INDICATIVE
from procplan.files.library import load_library
from procplan.model import LethalityCheck
from procplan.outcomes import LETHALITY_PRESETS, check_rule
from procplan.output.report import _plain, format_log_reduction, log_reduction_text
from procplan.run.assess import _lethality

ROOT = Path(__file__).resolve().parents[2]


def history(time_s, core_C):
    return pd.DataFrame({"time_s": np.asarray(time_s, float), "core_C": np.asarray(core_C, float)})


def test_log_reduction_beyond_the_preset_maximum_reads_greater_than():
    # The defect: a long hold at 90 °C printed "15 502 log" for a 6-log requirement.
    assert format_log_reduction(15502.3, 6.0) == "> 6"
    assert format_log_reduction(5.94, 6.0) == "5.9"
    assert format_log_reduction(13.0, None) == "> 12"
    out = _lethality(LethalityCheck(preset="listeria-6log"), history([0, 3600], [90.0, 90.0]))
    assert out.log_reduction > 1e4 and out.log_reduction_capped and out.max_log_reduction == 6.0
    assert log_reduction_text(out) == "> 6"
    j = _plain(out)  # JSON keeps the number and says it is beyond the validated range
    assert j["log_reduction"] > 1e4 and j["log_reduction_capped"] is True and j["max_log_reduction"] == 6.0
    f0 = _lethality(LethalityCheck(preset="f0-botulinum-12d"), history([0, 3600], [121.1, 121.1]))
    assert log_reduction_text(f0) == "> 12"


def test_tabulated_check_in_a_plan():
    # Source: CFA (2006) table: 85 °C for 36 min is the whole process. 31.6 min (the z-10 °C time) fails.
    out = _lethality(
        LethalityCheck(preset="c-botulinum-nonproteolytic-6log"), history([0, 36 * 60], [85.0, 85.0])
    )
    assert_allclose(out.process_fraction, 1.0, atol=1e-9)
    assert out.passed and out.z_C is None and out.reference_C == 90.0
    assert_allclose(out.log_reduction, 6.0, atol=1e-8)
    assert_allclose(out.reached.time_s, 36 * 60, rtol=1e-9)
    short = _lethality(
        LethalityCheck(preset="c-botulinum-nonproteolytic-6log"), history([0, 1896], [85.0, 85.0])
    )
    assert not short.passed and not short.reached.reached
    assert_allclose(short.log_reduction, 6.0 * 1896 / 2160, rtol=1e-9)
    # Source: USDA FSIS (1999) Appendix A, 7-log column: 146 °F for 182 s, half the time is half the process.
    half = _lethality(
        LethalityCheck(preset="salmonella-beef-7log-fsis-table"), history([0, 91], [(146 - 32) / 1.8] * 2)
    )
    assert_allclose(half.process_fraction, 0.5, atol=1e-9)
    assert_allclose(half.log_reduction, 3.5, atol=1e-8)


def test_indicative_presets_are_marked_where_they_show():
    out = _lethality(LethalityCheck(preset="listeria-6log-uk-table"), history([0, 120], [70.0, 70.0]))
    assert not out.confirmed and out.source.startswith(INDICATIVE)
    ok = _lethality(LethalityCheck(preset="salmonella-beef-7log-fsis-table"), history([0, 60], [60.0, 60.0]))
    assert ok.confirmed and not ok.source.startswith(INDICATIVE)


def test_no_recalled_value_reaches_a_user():
    # Library files and every preset or rule source a user can see.
    for path in (ROOT / "product_library").rglob("*.toml"):
        assert "from memory" not in path.read_text(encoding="utf-8"), path
    for p in LETHALITY_PRESETS.values():
        assert "from memory" not in p.source_text
    lib = load_library(ROOT / "product_library")
    t = np.array([0.0, 60.0])
    for rule in lib.rules.values():
        assert "from memory" not in rule.source + rule.notes + rule.title
        rc = check_rule(rule, t, np.array([5.0, 4.0]))
        assert rc.source.startswith(INDICATIVE) == (not rule.confirmed)
    assert not lib.rules["uk-cook-chill-90-min"].confirmed
    assert lib.rules["us-food-code-two-stage"].confirmed
