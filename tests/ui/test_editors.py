"""Editors of the app through AppTest: create, edit, a bad value named at its field in plain words, save,
reload. Saved files are read back with the library's own loaders; figures are compared with the library's run
of the same plan. Each test works on its own copy of the demo library."""

from __future__ import annotations

import re
import shutil

import pytest
from numpy.testing import assert_allclose

from tests.ui.test_app import go, metric, number_of

APP_FILE = __import__("pathlib").Path(__file__).resolve().parents[2] / "app.py"


@pytest.fixture()
def own(tmp_path, monkeypatch):
    """(app session, library folder) on a fresh copy of the demo library."""
    from streamlit.testing.v1 import AppTest

    from procplan.files.library import DEMO_LIBRARY

    root = tmp_path / "lib"
    shutil.copytree(DEMO_LIBRARY, root)
    monkeypatch.setenv("PROCPLAN_LIBRARY", str(root))
    at = AppTest.from_file(str(APP_FILE), default_timeout=180)
    at.run()
    assert not at.exception, at.exception
    return at, root


def reopen(root, page: str):
    from streamlit.testing.v1 import AppTest

    at = AppTest.from_file(str(APP_FILE), default_timeout=180)
    at.run()
    return go(at, page)


def widget(at, kind: str, label: str):
    for w in getattr(at, kind):
        if w.label == label:
            return w
    raise AssertionError(f"no {kind} {label!r}: {[w.label for w in getattr(at, kind)]}")


def button(at, label: str):
    return next(b for b in at.button if b.label == label)


def errors(at) -> str:
    return "\n".join(e.value for e in at.error)


# --- site ------------------------------------------------------------------------------------------------


def test_site_settings_edit_validate_save_reload(own):
    from procplan.files.site import load_site

    at, root = own
    go(at, "Site")
    widget(at, "text_input", "Plant name").set_value("").run()
    assert "**Plant**" in errors(at)  # the field in words, not site.plant
    assert button(at, "Save the site settings").disabled
    widget(at, "text_input", "Plant name").set_value("Harrowgate Fields test site").run()
    widget(at, "text_input", "Currency").set_value("").run()
    assert "**Energy, currency**" in errors(at)
    widget(at, "text_input", "Currency").set_value("EUR").run()
    widget(at, "radio", "Temperatures on the sheet").set_value("F").run()
    assert not errors(at)
    button(at, "Save the site settings").click().run()
    assert not at.exception, at.exception
    saved = load_site(root / "site.toml")
    assert (saved.plant, saved.currency, saved.temperature_unit) == (
        "Harrowgate Fields test site",
        "EUR",
        "F",
    )
    again = reopen(root, "Site")
    assert widget(again, "text_input", "Plant name").value == "Harrowgate Fields test site"


# --- rules -----------------------------------------------------------------------------------------------


def test_rule_create_bad_stage_named_save_reload(own):
    from procplan.files.library import load_library

    at, root = own
    go(at, "Library")
    assert widget(at, "selectbox", "Rule to edit").value == "(a new one)"
    widget(at, "text_input", "File name").set_value("test-chill").run()
    widget(at, "text_input", "Title").set_value("Test chill: to 5 °C in 4 h")
    widget(at, "text_input", "Source (the regulation, guideline or study, with its section)").set_value(
        "Plant HACCP plan, section 4 (test)"
    ).run()
    assert "Source" not in errors(at)
    widget(at, "checkbox", "From a temperature").check().run()
    widget(at, "number_input", "From a temperature, value [°C]").set_value(2.0).run()
    # a cooling stage from 2 °C down to 5 °C goes the wrong way: named at stage 1
    assert re.search(r"\*\*Stage 1, down to\*\*", errors(at)), errors(at)
    widget(at, "number_input", "From a temperature, value [°C]").set_value(60.0).run()
    widget(at, "number_input", "Within [min]").set_value(240.0).run()
    assert not [e for e in at.error if "Stage" in e.value]
    button(at, "Save to the library").click().run()
    assert not at.exception, at.exception
    assert "test-chill" in load_library(root).rules, errors(at)
    rule = load_library(root).rules["test-chill"]
    assert (rule.stages[0].from_C, rule.stages[0].to_C, rule.stages[0].within_min) == (60.0, 5.0, 240.0)
    again = reopen(root, "Library")
    assert "Test chill: to 5 °C in 4 h" in widget(again, "selectbox", "Rule to edit").options


def test_new_rule_hints_at_its_source_until_typed_or_saved(own):
    from procplan.files.library import load_library

    at, root = own
    go(at, "Library")
    source = "Source (the regulation, guideline or study, with its section)"
    assert widget(at, "selectbox", "Rule to edit").value == "(a new one)"
    # nothing typed yet: a neutral hint under the field, no fault
    assert "Source" not in errors(at), errors(at)
    assert any("a rule is saved only with its source" in c.value for c in at.caption)
    widget(at, "text_input", "File name").set_value("no-source").run()
    assert "Source" not in errors(at), errors(at)
    # a save tried without a source is refused, the field named, and nothing is written
    button(at, "Save to the library").click().run()
    assert "**Source**: missing" in errors(at), errors(at)
    assert "no-source" not in load_library(root).rules
    at.run()
    assert "**Source**: missing" in errors(at), errors(at)
    # typed, then cleared: the empty source is a fault from then on
    widget(at, "text_input", source).set_value("Plant HACCP plan, section 4 (test)").run()
    assert "Source" not in errors(at), errors(at)
    widget(at, "text_input", source).set_value("").run()
    assert "**Source**: missing" in errors(at), errors(at)


def test_cooling_rule_box_shows_its_short_name_and_the_full_title_below(own):
    from procplan.files.library import load_library

    at, root = own
    go(at, "Process")
    full = load_library(root).rules["us-food-code-two-stage"].title
    box = widget(at, "selectbox", "Cooling / holding rule")
    box.set_value("us-food-code-two-stage").run()
    box = widget(at, "selectbox", "Cooling / holding rule")
    assert "US FDA Food Code two-stage cooling" in box.options and full not in box.options
    assert any(c.value == full for c in at.caption)
    # what the plan keeps is the rule's file name, not the text shown
    assert at.session_state["plan"]["checks"]["cooling_rule"] == "us-food-code-two-stage"


# --- machines --------------------------------------------------------------------------------------------


def test_machine_edit_range_named_replace_reload(own):
    from procplan.files.library import load_library

    at, root = own
    go(at, "Library")
    widget(at, "selectbox", "Machine to edit").set_value("chiller-b2").run()
    widget(at, "number_input", "Air temperature, lowest [°C]").set_value(5.0).run()
    # lowest above highest (2 °C): named at the air temperature's range, in words
    assert "Setting, air [°C]" in errors(at), errors(at)
    widget(at, "number_input", "Air temperature, lowest [°C]").set_value(-18.0)
    widget(at, "number_input", "Capacity [kW]").set_value(35.0).run()
    assert "Setting" not in errors(at) and "Capacity" not in errors(at)
    save = [b for b in at.button if b.label == "Save to the library"][-1]
    save.click().run()
    assert (
        "already in the library" in errors(at)
        or load_library(root).equipment["chiller-b2"].capacity_kW == 30.0
    )
    [c for c in at.checkbox if c.label == "Replace the saved one of this name"][-1].check().run()
    [b for b in at.button if b.label == "Save to the library"][-1].click().run()
    assert not at.exception, at.exception
    assert load_library(root).equipment["chiller-b2"].capacity_kW == 35.0, (
        errors(at),
        [(c.label, c.value, c.disabled) for c in at.checkbox],
        [s.value for s in at.success],
    )
    again = reopen(root, "Library")
    widget(again, "selectbox", "Machine to edit").set_value("chiller-b2").run()
    assert widget(again, "number_input", "Capacity [kW]").value == 35.0


# --- plan: targets and a custom lethality ---------------------------------------------------------------


def test_surface_target_matches_the_library(own):
    from procplan.files.library import load_library
    from procplan.model import Target
    from procplan.run.engine import run_plan

    at, root = own
    go(at, "Process")
    button(at, "Add a target at the surface, mean, core or a depth").click().run()
    widget(at, "number_input", "Temperature to reach [°C]").set_value(10.0).run()
    assert not at.exception, at.exception
    go(at, "Result")
    table = at.dataframe[0].value
    row = table[table["point"] == "surface"].iloc[0]
    lib = load_library(root)
    plan = lib.plan("roulade-blast-chill").with_step(0, targets=(Target(10.0, "surface"),))
    ref = next(t for t in run_plan(plan, library=lib).outcomes.targets if t.point == "surface")
    assert_allclose(number_of(row["time in step"]), (ref.target.time_s - ref.target.start_s) / 60.0, atol=0.5)


def test_depth_target_edit_bad_value_save_reload_and_library(own):
    from procplan.files.library import load_library
    from procplan.files.plan import plan_from_toml
    from procplan.model import Target
    from procplan.run.engine import run_plan

    at, root = own
    go(at, "Process")
    button(at, "Add a target at the surface, mean, core or a depth").click().run()
    widget(at, "selectbox", "Target 1 at the").set_value("depth").run()
    # the roulade is 85 mm across: 60 mm is beyond its centre, named at its field with the allowed range
    widget(at, "number_input", "Depth below the surface [mm]").set_value(60.0).run()
    assert not at.exception, at.exception
    assert "**Step 1, target 1, depth [mm]**" in errors(at) and "42.5" in errors(at), errors(at)
    widget(at, "number_input", "Depth below the surface [mm]").set_value(10.0)
    widget(at, "number_input", "Temperature to reach [°C]").set_value(10.0).run()
    assert not errors(at), errors(at)
    go(at, "Result")
    table = at.dataframe[0].value
    row = table[table["point"] == "10 mm below the surface"].iloc[0]
    lib = load_library(root)
    plan = lib.plan("roulade-blast-chill").with_step(0, targets=(Target(10.0, "depth", 0.01),))
    ref = next(t for t in run_plan(plan, library=lib).outcomes.targets if t.point == "depth")
    assert ref.label == "10 mm below the surface" and ref.target.reached
    assert_allclose(number_of(row["time in step"]), (ref.target.time_s - ref.target.start_s) / 60.0, atol=0.5)
    # saved as the plan file, and opened again: the widget shows the depth
    text = at.session_state["last_good_toml"]
    assert plan_from_toml(text, library=lib).steps[0].targets == (Target(10.0, "depth", 0.01),)
    again = reopen(root, "Sheet & files")
    again.text_area(key="paste_plan").set_value(text)
    again.button(key="paste_btn").click().run()
    go(again, "Process")
    assert widget(again, "selectbox", "Target 1 at the").value == "depth"
    assert widget(again, "number_input", "Depth below the surface [mm]").value == 10.0


def test_custom_lethality_by_F_and_by_D_and_log_reduction(own):
    from procplan.files.library import load_library
    from procplan.model import LethalityCheck
    from procplan.outcomes.lethality import log_reduction
    from procplan.run.engine import run_plan

    at, root = own
    go(at, "Sheet & files")
    at.selectbox(key="open_lib_plan").set_value("soup-pouch-pasteurise")
    at.button(key="open_lib_btn").click().run()
    go(at, "Process")
    leth = widget(at, "selectbox", "Lethality requirement")
    custom = next(o for o in leth.options if o.startswith("custom requirement"))
    leth.set_value(custom).run()
    widget(at, "number_input", "Reference temperature [°C]").set_value(90.0)
    widget(at, "number_input", "z-value [K]").set_value(7.5)
    widget(at, "number_input", "Required F [min]").set_value(-1.0).run()
    assert "**Lethality, required F**" in errors(at), errors(at)
    widget(at, "number_input", "Required F [min]").set_value(2.0).run()
    go(at, "Result")
    lib = load_library(root)
    plan = lib.plan("soup-pouch-pasteurise")
    import dataclasses

    checks = dataclasses.replace(
        plan.checks, lethality=LethalityCheck(reference_C=90.0, z_C=7.5, required_F_min=2.0)
    )
    ref = run_plan(dataclasses.replace(plan, checks=checks), library=lib).outcomes.lethality
    from procplan.output.report import format_f

    assert metric(at, "F at the core") == f"{format_f(ref.total_F_min)} min"
    assert 0.0 < ref.total_F_min < 1e4
    assert number_of(metric(at, "Required F")) == 2.0
    # the same requirement as a D-value and a log reduction: F = n·D
    go(at, "Process")
    widget(at, "radio", "Requirement as").set_value("D").run()
    widget(at, "number_input", "D-value at the reference temperature [min]").set_value(0.5)
    widget(at, "number_input", "Log reduction wanted").set_value(6.0).run()
    go(at, "Result")
    assert number_of(metric(at, "Required F")) == 3.0
    assert log_reduction(3.0, 0.5) == pytest.approx(6.0)


# --- plan: the medium over time --------------------------------------------------------------------------

PROFILE_PLAN = """
title = "profile test"
[product]
library = "chicken-roulade"
[start]
temperature_C = 74
[[steps]]
name = "chill"
h_W_m2K = 40
medium_profile = [[0, -8], [60, 0]]
duration_min = 600
stop_when_core_C = 5
"""


def test_medium_profile_is_edited_and_can_become_constant(own):
    from procplan.files.library import load_library
    from procplan.files.plan import plan_from_toml
    from procplan.run.engine import run_plan

    at, root = own
    go(at, "Sheet & files")
    at.text_area(key="paste_plan").set_value(PROFILE_PLAN)
    at.button(key="paste_btn").click().run()
    go(at, "Process")
    assert widget(at, "radio", "Medium temperature").value == "profile"
    assert at.session_state["plan"]["steps"][0]["medium_profile"] == [[0.0, -8.0], [60.0, 0.0]]
    lib = load_library(root)
    ref = run_plan(plan_from_toml(PROFILE_PLAN, library=lib), library=lib)
    tg = [t for t in ref.outcomes.targets if t.kind == "stop"][-1]
    assert tg.target.reached, tg.target.reason
    assert_allclose(number_of(metric(at, "Time to target")), tg.target.time_s / 60.0, atol=0.5)
    widget(at, "radio", "Medium temperature").set_value("constant").run()
    step = at.session_state["plan"]["steps"][0]
    assert "medium_profile" not in step and step["medium_C"] == -8.0


# --- product: emissivity of the product or its packaging -----------------------------------------------


def test_product_emissivity_edit_bad_value_save_reload_and_library(own):
    from dataclasses import replace

    from procplan.files.library import load_library
    from procplan.run.engine import run_plan

    at, root = own
    go(at, "Product")
    widget(at, "checkbox", "State the surface emissivity of the product or its packaging").check().run()
    widget(at, "number_input", "Surface emissivity").set_value(1.5).run()
    assert not at.exception, at.exception
    assert "**Emissivity**" in errors(at) and "[0, 1]" in errors(at), errors(at)
    widget(at, "number_input", "Surface emissivity").set_value(0.05).run()
    assert not errors(at), errors(at)
    go(at, "Result")
    lib = load_library(root)
    plan = lib.plan("roulade-blast-chill")
    ref = run_plan(replace(plan, product=replace(plan.product, emissivity=0.05)), library=lib)
    tg = [t for t in ref.outcomes.targets if t.kind == "stop"][-1]
    assert_allclose(number_of(metric(at, "Time to target")), tg.target.time_s / 60.0, atol=0.5)
    # a shiny wrap: slower than the machine's setting (0.9) gives
    base = [t for t in run_plan(plan, library=lib).outcomes.targets if t.kind == "stop"][-1]
    assert tg.target.time_s > base.target.time_s
    # saved as a library product and opened again
    go(at, "Product")
    widget(at, "text_input", "Save under the name").set_value("roulade-foil").run()
    button(at, "Save product").click().run()
    assert not at.exception, at.exception
    assert load_library(root).products["roulade-foil"].emissivity == 0.05
    again = reopen(root, "Product")
    again.text_input(key="product_search").set_value("roulade-foil").run()
    again.button(key="use_product").click().run()
    assert widget(again, "number_input", "Surface emissivity").value == 0.05


def test_ice_fraction_model_edit_bad_value_save_reload_and_library(own):
    import math

    from procplan.files.library import load_library

    at, root = own
    go(at, "Product")
    widget(at, "selectbox", "Ice fraction model").set_value("tchigeov").run()
    assert not at.exception, at.exception
    assert at.session_state["plan"]["product"]["ice_model"] == "tchigeov"
    # the property table on the page against the published equation
    # Source: ASHRAE Handbook—Refrigeration (2006), ch. 9, eq. (9) (Tchigeov 1979), roulade water 0.68
    table = next(d.value for d in at.dataframe if "ice fraction [kg/kg]" in d.value.columns)
    captions = " ".join(c.value for c in at.caption)
    tf = float(re.search(r"Initial freezing point (-?\d+\.\d+) °C", captions).group(1))
    row = table[table["temperature [°C]"] == -10.0].iloc[0]
    ref = 1.105 * 0.68 / (1.0 + 0.7138 / math.log(tf + 10.0 + 1.0))
    assert_allclose(row["ice fraction [kg/kg]"], ref, atol=2e-3)  # the table rounds to 0.001, tf to 0.1 K
    # saved and opened again
    widget(at, "text_input", "Save under the name").set_value("roulade-tchigeov").run()
    button(at, "Save product").click().run()
    assert not at.exception, at.exception
    assert load_library(root).products["roulade-tchigeov"].ice_model == "tchigeov"
    again = reopen(root, "Product")
    again.text_input(key="product_search").set_value("roulade-tchigeov").run()
    again.button(key="use_product").click().run()
    assert widget(again, "selectbox", "Ice fraction model").value == "tchigeov"
    # a bad value can only come from a file: a pasted plan names the field
    go(again, "Sheet & files")
    text = again.session_state["last_good_toml"].replace('ice_model = "tchigeov"', 'ice_model = "linear"')
    assert 'ice_model = "linear"' in text
    again.text_area(key="paste_plan").set_value(text)
    again.button(key="paste_btn").click().run()
    assert "product.ice_model" in errors(again) and "'tchigeov'" in errors(again), errors(again)
