"""A PlanResult shown in a notebook: a short text and a small table, not the whole dataclass."""

from __future__ import annotations


def test_plan_result_repr_is_short_and_says_what_matters():
    from procplan.files.library import load_library
    from procplan.run.engine import run_plan

    lib = load_library()
    result = run_plan(lib.plan("roulade-blast-chill"), library=lib)
    text = repr(result)
    assert len(text) < 600, len(text)
    assert result.plan.title in text and "blast chill" in text
    end = result.history.iloc[-1]
    assert f"core {end['core_C']:.1f} °C" in text
    assert ("rule PASS" if result.outcomes.rule_check.passed else "rule FAIL") in text
    html = result._repr_html_()
    assert html.count("<tr>") == 1 + len(result.steps) and len(html) < 2000
    assert "<script" not in html
