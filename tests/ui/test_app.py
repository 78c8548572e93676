"""The browser app driven through streamlit's AppTest: every page, inputs changed, numbers and messages read.

The checks compare what a page shows with what the library computes for the same plan (display rounding
is the tolerance), with physical invariants (colder air cools faster), and with unit definitions.
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.caution import CAUTION


def go(at, page: str):
    """Open a page by its title, as a click in the sidebar navigation does."""
    from procplan.ui.main import PAGES

    script = next(script for title, script, *_ in PAGES if title == page)
    at.switch_page(f"procplan/ui/pages/{script}").run()
    assert not at.exception, at.exception
    return at


def metric(at, prefix: str) -> str:
    for m in at.metric:
        if m.label.startswith(prefix):
            return m.value
    raise AssertionError(f"no metric {prefix!r}; have {[m.label for m in at.metric]}")


def number_of(text: str) -> float:
    m = re.search(r"-?\d+(?:\.\d+)?", text.replace(",", ""))
    assert m, text
    return float(m.group())


def number_input(at, prefix: str):
    for w in at.number_input:
        if w.label.startswith(prefix):
            return w
    raise AssertionError(f"no number input {prefix!r}; have {[w.label for w in at.number_input]}")


def errors(at) -> str:
    return "\n".join(e.value for e in at.error)


def caution_shown(at) -> bool:
    return any(CAUTION in w.value for w in at.warning)


def library_result(library_copy, plan_name: str = "roulade-blast-chill", **step_changes):
    from procplan.files.library import load_library
    from procplan.run.engine import run_plan

    lib = load_library(library_copy)
    plan = lib.plan(plan_name)
    if step_changes:
        plan = plan.with_step(0, **step_changes)
    return run_plan(plan, library=lib)


# --- opening -----------------------------------------------------------------------------------------


def test_opens_with_the_demo_result_matching_the_library(app, library_copy):
    assert caution_shown(app)
    ref = library_result(library_copy)
    tg = [t for t in ref.outcomes.targets if t.kind == "stop"][-1]
    shown = number_of(metric(app, "Time to target"))
    # display rounds to whole minutes above 100 min
    assert_allclose(shown, tg.target.time_s / 60.0, atol=0.5)
    assert_allclose(number_of(metric(app, "Plan time with margin")), tg.margin.plan_min, atol=0.5)
    assert metric(app, "Rule check") == ("PASS" if ref.outcomes.rule_check.passed else "FAIL")
    assert "Line 2 herb chicken roulade" in " ".join(c.value for c in app.sidebar.caption)


@pytest.mark.parametrize("page", ["Product", "Process", "Result", "Compare & studies", "Sheet & files"])
def test_every_page_shows_the_caution_and_no_exception(app, page):
    go(app, page)
    assert caution_shown(app), page
    assert not errors(app), errors(app)


# --- units -------------------------------------------------------------------------------------------


def test_fahrenheit_and_hours_convert_at_display(app, library_copy):
    ref = library_result(library_copy)
    end_core_C = float(ref.history["core_C"].iloc[-1])
    app.sidebar.radio(key="temperature_unit").set_value("°F")
    app.sidebar.radio(key="time_unit").set_value("h").run()
    assert not app.exception
    # Source: definition of the Fahrenheit scale, °F = °C × 9/5 + 32 (NIST SP 811, 2008, App. B; from memory)
    assert_allclose(number_of(metric(app, "Core at the end")), end_core_C * 9 / 5 + 32, atol=0.05)
    assert metric(app, "Core at the end").endswith("°F")
    tg = [t for t in ref.outcomes.targets if t.kind == "stop"][-1]
    assert_allclose(number_of(metric(app, "Time to target")), tg.target.time_s / 3600.0, atol=0.005)
    # the Process page's temperature inputs follow the unit; the plan itself stays in °C
    go(app, "Process")
    start = number_input(app, "Product temperature at the start")
    assert "°F" in start.label
    assert_allclose(start.value, 74 * 9 / 5 + 32, atol=1e-6)
    assert app.session_state["plan"]["start"]["temperature_C"] == pytest.approx(74.0, abs=1e-6)


# --- process page ------------------------------------------------------------------------------------


def test_colder_air_shortens_the_time_to_target(app, library_copy):
    go(app, "Process")
    air = number_input(app, "Air temperature")
    # the machine's setting range bounds the input
    from procplan.files.library import load_library

    rng = load_library(library_copy).equipment["chiller-b2"].settings["air_C"]
    assert (air.min, air.max) == (rng.minimum, rng.maximum)
    before = number_of(metric(app, "Time to target"))
    air.set_value(-15.0).run()
    assert not app.exception
    after = number_of(metric(app, "Time to target"))
    assert after < before  # colder air removes heat faster
    go(app, "Result")
    assert number_of(metric(app, "Time to target")) == after
    ref = library_result(library_copy, settings=(("air_C", -15.0), ("air_speed_m_s", 4.0)))
    tg = [t for t in ref.outcomes.targets if t.kind == "stop"][-1]
    assert_allclose(after, tg.target.time_s / 60.0, atol=0.5)


def test_process_page_shows_biot_regime_and_solver_of_the_library(app, library_copy):
    go(app, "Process")
    ref = library_result(library_copy).steps[0]
    assert_allclose(number_of(metric(app, "Biot number")), ref.regime.bi, rtol=5e-3)  # shown to 3 digits
    assert metric(app, "Regime") == ref.regime.regime
    assert metric(app, "Solver") == ref.solver
    table = " ".join(str(t.value.to_string()) for t in app.table)
    assert ref.reason.split(":")[0] in table
    assert "convection h" in table and "packaging resistance" in table


def test_steps_can_be_added_reordered_and_removed(app):
    go(app, "Process")
    app.button(key=next(b.key for b in app.button if b.label == "Add a step")).click().run()
    steps = app.session_state["plan"]["steps"]
    assert [s["name"] for s in steps] == ["blast chill", "step 2"]
    up = [b for b in app.button if b.label == "▲"]
    up[1].click().run()
    assert [s["name"] for s in app.session_state["plan"]["steps"]] == ["step 2", "blast chill"]
    assert not app.exception
    rm = [b for b in app.button if b.label == "✕"]
    rm[0].click().run()
    assert [s["name"] for s in app.session_state["plan"]["steps"]] == ["blast chill"]
    assert not errors(app)


# --- product page ------------------------------------------------------------------------------------


def test_composition_that_does_not_add_up_is_named_with_its_sum(app):
    go(app, "Product")
    number_input(app, "Water").set_value(0.58).run()  # 0.58 + 0.21 + 0.08 + 0.01 + 0 + 0.02 = 0.90
    assert not app.exception
    text = errors(app)
    assert "Composition" in text and "0.900" in text and "0.100 below 1" in text
    # the result page keeps the last valid result and names the field with the allowed range
    go(app, "Result")
    text = errors(app)
    assert "product.composition" in text and "summing to 1 within 0.005" in text
    assert number_of(metric(app, "Time to target")) > 0
    assert any("last plan that could be calculated" in i.value for i in app.info)
    # what the user typed is kept
    assert app.session_state["plan"]["product"]["composition"]["water"] == pytest.approx(0.58)


def test_property_curves_follow_the_library(app):
    go(app, "Product")
    captions = " ".join(c.value for c in app.caption)
    from procplan.properties import food_properties

    comp = {"water": 0.68, "protein": 0.21, "fat": 0.08, "carbohydrate": 0.01, "fiber": 0.0, "ash": 0.02}
    tf = food_properties(comp, [0.0]).initial_freezing_C
    m = re.search(r"Initial freezing point (-?\d+\.\d) °C", captions)
    assert m, captions
    assert_allclose(float(m.group(1)), tf, atol=0.05)


def test_pick_a_library_product_with_the_search_filter(app):
    go(app, "Product")
    app.text_input(key="product_search").set_value("vaccine").run()
    pick = app.selectbox(key="product_pick")
    assert len(pick.options) == 1 and pick.value == "vaccine-vial-10ml"
    app.button(key="use_product").click().run()
    assert not app.exception
    assert app.session_state["plan"]["product"]["name"] == "vaccine-vial-10ml"
    assert (
        app.radio(key=next(r.key for r in app.radio if r.label == "Properties from")).value
        == "measured constants"
    )


def _use_product(app, query: str, name: str):
    go(app, "Product")
    app.text_input(key="product_search").set_value(query).run()
    assert app.selectbox(key="product_pick").value == name
    app.button(key="use_product").click().run()
    assert not app.exception, app.exception


def _title_input(app):
    return next(w for w in app.text_input if w.label == "Plan title")


def test_switching_the_product_updates_the_plan_title(app):
    # The demo plan's title names the roulade; once the cod portion is in the plan that title would be
    # wrong, so a title the user did not write follows the product ("<product> in <machine>").
    _use_product(app, "cod loin", "cod-portion")
    assert app.session_state["plan"]["title"] == "cod-portion in chiller-b2"
    assert any("cod-portion in chiller-b2" in c.value for c in app.sidebar.caption)
    go(app, "Process")
    assert _title_input(app).value == "cod-portion in chiller-b2"
    # switching again: the default title follows again
    _use_product(app, "meatball", "beef-meatball")
    go(app, "Process")
    assert _title_input(app).value == "beef-meatball in chiller-b2"


def test_a_title_the_user_wrote_is_kept_when_the_product_changes(app):
    go(app, "Process")
    _title_input(app).set_value("Trial 14: line 2 chiller").run()
    _use_product(app, "cod loin", "cod-portion")
    assert app.session_state["plan"]["title"] == "Trial 14: line 2 chiller"
    assert app.session_state["plan"]["product"]["name"] == "cod-portion"


def test_save_product_refuses_to_overwrite_unless_confirmed(app, library_copy):
    go(app, "Product")
    target = library_copy / "products" / "chicken-roulade.toml"
    before = target.read_text()
    app.button(key="p.save").click().run()
    assert not app.exception
    assert "product.name" in errors(app) and "already saved" in errors(app)
    assert target.read_text() == before
    name = next(t for t in app.text_input if t.label == "Save under the name")
    name.set_value("roulade-thin").run()
    app.button(key="p.save").click().run()
    assert (library_copy / "products" / "roulade-thin.toml").exists()
    assert any("Saved product 'roulade-thin'" in s.value for s in app.success)


# --- outputs page ------------------------------------------------------------------------------------

BAD_PLAN = """
title = "bad plan"
[product]
library = "chicken-roulade"
[start]
temperature_C = 400
[[steps]]
name = "chill"
equipment = "chiller-zz"
duration_min = 60
"""


def test_uploaded_plan_with_errors_is_refused_field_by_field(app):
    go(app, "Sheet & files")
    title = app.session_state["plan"]["title"]
    app.text_area(key="paste_plan").set_value(BAD_PLAN)
    app.button(key="paste_btn").click().run()
    assert not app.exception
    text = errors(app)
    assert "start.temperature_C" in text and "[-40, 150] °C" in text
    assert "steps[0].equipment" in text and "chiller-b2" in text
    assert app.session_state["plan"]["title"] == title


def test_open_a_library_plan_and_its_result(app, library_copy):
    go(app, "Sheet & files")
    app.selectbox(key="open_lib_plan").set_value("vial-cool-down")
    app.button(key="open_lib_btn").click().run()
    go(app, "Result")
    ref = library_result(library_copy, "vial-cool-down")
    # no stop condition: the first declared target is reported, as procplan.studies.metrics does
    tg = ref.outcomes.targets[0]
    assert tg.kind == "target"
    assert_allclose(number_of(metric(app, "Time to target")), tg.target.time_s / 60.0, atol=0.05)


def test_pasted_plan_round_trips_through_the_plan_file(app):
    from procplan.files.plan import plan_from_toml, plan_to_toml

    go(app, "Sheet & files")
    lib_plan = Path(__file__).resolve().parents[2] / "product_library" / "plans" / "vial-cool-down.toml"
    app.text_area(key="paste_plan").set_value(lib_plan.read_text())
    app.button(key="paste_btn").click().run()
    assert not errors(app)
    assert app.session_state["plan"]["title"].startswith("Fill suite")
    from procplan.files.library import load_library

    text = app.session_state["last_good_toml"]
    plan = plan_from_toml(text, library=load_library())
    assert plan_to_toml(plan) == text


# --- studies page ------------------------------------------------------------------------------------


def _open_vial(app):
    go(app, "Sheet & files")
    app.selectbox(key="open_lib_plan").set_value("vial-cool-down")
    app.button(key="open_lib_btn").click().run()
    go(app, "Compare & studies")


def test_scenarios_are_overlaid_and_compared(app):
    _open_vial(app)
    app.button(key="scen_add").click().run()
    go(app, "Process")
    number_input(app, "Air temperature").set_value(2.0).run()
    go(app, "Compare & studies")
    assert not app.exception
    table = app.dataframe[0].value  # one column per scenario, one row per figure
    assert set(table.columns) == {"scenario 1", "current plan"}
    times = {s: number_of(table.loc["time to target", s]) for s in table.columns}
    assert times["current plan"] < times["scenario 1"]  # 2 °C air cools faster than 5 °C air


def test_required_setting_is_found_and_confirmed(app):
    _open_vial(app)
    app.selectbox(key="rs_param").set_value("medium_C")
    app.selectbox(key="rs_goal").set_value("time")
    number_input(app, "Allowed time").set_value(30.0)
    app.button(key="rs_go").click().run()
    assert not app.exception, app.exception
    assert metric(app, "Confirmed by a forward run") == "yes"
    value = number_of(metric(app, "Required medium temperature"))
    # the vial reaches 8 °C at the surface in 27 min with 5 °C air: 30 min allows warmer air, below 8 °C
    assert 5.0 < value < 8.0


def test_variability_shows_percentiles_and_histogram(app):
    _open_vial(app)
    app.multiselect(key="mc_vars").set_value(["h_factor"])
    app.text_input(key="mc_spec_h_factor").set_value("uniform:0.8,1.2")
    number_input(app, "Samples").set_value(100)
    app.button(key="mc_go").click().run()
    assert not app.exception, app.exception
    frame = app.dataframe[-1].value
    row = frame[frame["quantity"] == "Time to target"].iloc[0]
    p50, p95 = number_of(row["P50"]), number_of(row["P95"])
    assert p50 <= p95


def test_bad_distribution_is_named(app):
    _open_vial(app)
    app.multiselect(key="mc_vars").set_value(["h_factor"])
    app.text_input(key="mc_spec_h_factor").set_value("uniform:1.2,0.8")
    app.button(key="mc_go").click().run()
    assert not app.exception
    assert "uniform.high" in errors(app)


# --- architecture ------------------------------------------------------------------------------------


def test_library_imports_no_streamlit():
    code = (
        "import sys, pkgutil, importlib, procplan\n"
        "for m in pkgutil.walk_packages(procplan.__path__, 'procplan.'):\n"
        "    if not m.name.startswith('procplan.ui'):\n"
        "        importlib.import_module(m.name)\n"
        "assert 'streamlit' not in sys.modules, [k for k in sys.modules if 'streamlit' in k][:3]\n"
    )
    subprocess.run([sys.executable, "-c", code], check=True, timeout=120)


def test_history_csv_matches_the_library(app, library_copy):
    from procplan.ui import adapter

    text = app.session_state["last_good_toml"]
    csv = adapter.history_csv(text).decode()
    import io

    import pandas as pd

    frame = pd.read_csv(io.StringIO(csv))
    ref = library_result(library_copy).history
    assert_allclose(frame["core_C"].to_numpy(), ref["core_C"].to_numpy(), rtol=1e-12)
    assert_allclose(frame["time_min"].to_numpy(), ref["time_s"].to_numpy() / 60.0, rtol=1e-12)
    assert np.all(np.diff(frame["time_s"]) > 0)


def test_logger_upload_preview_and_fitted_h(app, library_copy):
    ref = library_result(library_copy, "vial-cool-down")
    h = ref.history
    t_min = np.arange(0.0, 120.0, 2.0)
    core = np.interp(t_min * 60.0, h["time_s"], h["core_C"])
    text = "time_min;core (C)\n" + "\n".join(
        f"{t:g};{c:.3f}".replace(".", ",") for t, c in zip(t_min, core, strict=True)
    )
    _open_vial(app)
    app.text_area(key="log_paste").set_value(text).run()
    assert not app.exception, app.exception
    # the guessed mapping is offered for review: decimal comma, minutes, one probe
    assert app.selectbox(key="log_time").value == "time_min"
    assert app.selectbox(key="log_tunit").value == "min"
    assert app.multiselect(key="log_channels").value == ["core (C)"]
    app.button(key="log_fit").click().run()
    assert not app.exception, app.exception
    fitted = number_of(metric(app, "Fitted h"))
    # Independent check: the curve was made by the library with the step's own h, so the fit must return it
    # (the 3-decimal rounding of the readings and the interpolation allow about 2 %)
    assert_allclose(fitted, ref.steps[0].surface.h_W_m2K[0], rtol=0.02)
    # saving the fit writes a measured value into the (temporary) library folder, and nothing else changes
    app.text_input(key="log_source").set_value("trial 30 Nov, logger 7").run()
    app.button(key="log_save").click().run()
    assert not app.exception, app.exception
    saved = list((library_copy / "measurements").glob("vaccine-vial-10ml--pharma-cr1--*.toml"))
    assert len(saved) == 1 and "trial 30 Nov" in saved[0].read_text()
    assert any("Saved to" in s.value for s in app.success)
    saved[0].unlink()  # the library copy is shared by the session's tests


def test_catalogue_sweep_table_equals_the_library_sweep(app, library_copy):
    from procplan.files.library import load_library
    from procplan.studies.sweep import sweep_catalogue

    go(app, "Compare & studies")
    app.multiselect(key="sw_products").set_value(["soup-pouch"])
    app.multiselect(key="sw_machines").set_value(["chiller-b1"])
    app.button(key="sw_go").click().run()
    assert not app.exception, app.exception
    from procplan.ui.fmt import Units
    from procplan.ui.studies_panels import sweep_columns

    shown = app.dataframe[-1].value
    label = sweep_columns(Units())  # the library's column names as the page labels them (°C, min)
    direct = sweep_catalogue(
        load_library(library_copy), products=["soup-pouch"], equipment=["chiller-b1"]
    ).table
    assert len(shown) == len(direct) == 1
    for col in direct.columns:
        if direct[col].dtype.kind == "f":
            assert_allclose(
                shown[label[col]].to_numpy(dtype=float),
                direct[col].to_numpy(dtype=float),
                rtol=1e-9,
                equal_nan=True,
            )
