"""Brining and drying steps in the app (AppTest): the demo plans' settings in the Process page's widgets, the
Result page's numbers against the library's run of the same plan, an edited brine concentration rerun
through the library, a bad value named at its field, and the brine settings kept through the plan text that
the app saves and opens again."""

from __future__ import annotations

import json
import math
from dataclasses import replace

import pytest
from numpy.testing import assert_allclose

from procplan.run.drip import CAUTION as DRIP_CAUTION
from procplan.run.drip import cook_loss_text, run_bracket, yield_text

from .test_app import errors, go, library_result, metric, number_input, number_of


def _reopened(text: str):
    """A fresh app with the saved plan ``text`` pasted on the Sheet & files page, open on the Process page."""
    from streamlit.testing.v1 import AppTest

    from .conftest import APP

    again = AppTest.from_file(str(APP), default_timeout=180)
    again.run()
    go(again, "Sheet & files")
    again.text_area(key="paste_plan").set_value(text)
    again.button(key="paste_btn").click().run()
    go(again, "Process")
    return again


BRINE_PLAN = "pork-loin-brine-freeze"
OVEN_PLAN = "beef-joint-oven-roast"


def _open(app, name: str, page: str = "Process"):
    go(app, "Sheet & files")
    app.selectbox(key="open_lib_plan").set_value(name)
    app.button(key="open_lib_btn").click().run()
    return go(app, page)


def _widget(at, kind: str, label: str):
    for w in getattr(at, kind):
        if w.label == label:
            return w
    raise AssertionError(f"no {kind} {label!r}: {[w.label for w in getattr(at, kind)]}")


def _figures(at) -> list[dict]:
    return [json.loads(c.proto.spec) for c in at.get("plotly_chart")]


def _values(data) -> list[float]:
    """A trace's numbers from the chart's JSON (plain lists, or plotly's base64 typed arrays)."""
    import base64

    import numpy as np

    if isinstance(data, dict) and "bdata" in data:
        return np.frombuffer(base64.b64decode(data["bdata"]), dtype=np.dtype(data["dtype"])).tolist()
    return list(data)


def _axis_titles(fig: dict) -> set[str]:
    layout = fig["layout"]
    return {
        (layout[k].get("title") or {}).get("text", "") for k in layout if k.startswith(("xaxis", "yaxis"))
    }


def _library_run(library_copy, name: str, brine_changes: dict | None = None):
    from procplan.files.library import load_library
    from procplan.run.engine import run_plan

    lib = load_library(library_copy)
    plan = lib.plan(name)
    if brine_changes:
        plan = plan.with_step(0, brine=replace(plan.steps[0].brine, **brine_changes))
    return run_plan(plan, library=lib)


# --- brining ----------------------------------------------------------------------------------------------


def test_brine_demo_plan_shows_its_settings_and_the_library_numbers(app, library_copy):
    from procplan.properties.diffusivity import DIFFUSIVITIES

    _open(app, BRINE_PLAN)
    # the plan file's values in the widgets (product_library/plans/pork-loin-brine-freeze.toml)
    assert _widget(app, "checkbox", "Brining or curing in this step (salt or sugar taken up)").value
    assert number_input(app, "Brine concentration [% salt]").value == pytest.approx(10.0)
    assert number_input(app, "Salt in the product at the start").value == pytest.approx(0.1)
    assert number_input(app, "Core salt to stop at").value == pytest.approx(1.2)
    assert number_input(app, "Mean salt target").value == pytest.approx(3.0)
    assert _widget(app, "radio", "The step ends when").value == "core"
    assert _widget(app, "selectbox", "Diffusivity of the solute in the product").value == "salt-pork-loin"
    rec = DIFFUSIVITIES["salt-pork-loin"]
    captions = " ".join(c.value for c in app.caption)
    assert rec.source in captions
    assert f"Valid from {rec.range_C[0]:g} °C to {rec.range_C[1]:g} °C" in captions
    assert f"{rec.D_ref_m2_s:.3g} m²/s" in captions
    assert not errors(app), errors(app)

    go(app, "Result")
    ref = library_result(library_copy, BRINE_PLAN)
    m = ref.steps[0].mass
    # display rounding is the tolerance: whole minutes above 100 min, 0.01 % for contents
    assert_allclose(number_of(metric(app, "Time to the salt stop (core)")), m.stopped_at_s / 60.0, atol=0.5)
    assert_allclose(
        number_of(metric(app, "Mean salt target 3.00 %")), m.target_mean_reached_s / 60.0, atol=0.5
    )
    assert_allclose(number_of(metric(app, "Core salt at the end")), 100 * m.core_fraction[-1], atol=0.005)
    assert_allclose(number_of(metric(app, "Mean salt at the end")), 100 * m.mean_fraction[-1], atol=0.005)
    assert_allclose(
        number_of(metric(app, "Equilibrium with the brine")), 100 * m.equilibrium_fraction, atol=0.005
    )
    # the chart: temperature beside the salt, axes in words with units
    titles = set().union(*(_axis_titles(f) for f in _figures(app)))
    assert {"temperature [°C]", "salt in the product [% of its mass]", "time [min]"} <= titles
    salt = next(f for f in _figures(app) if any(t.get("name") == "core salt" for t in f["data"]))
    core = _values(next(t for t in salt["data"] if t.get("name") == "core salt")["y"])
    assert_allclose(core[-1], 100 * m.core_fraction[-1], rtol=1e-9)
    # Invariant: the solute only enters from the brine, so the core never holds more than the mean
    # (Crank, The Mathematics of Diffusion, 2nd ed., ch. 4: uptake by a slab from a constant surface)
    mean = _values(next(t for t in salt["data"] if t.get("name") == "mean salt")["y"])
    assert all(c <= mm + 1e-9 for c, mm in zip(core, mean, strict=True))


def test_edited_brine_concentration_reruns_the_library(app, library_copy):
    _open(app, BRINE_PLAN)
    number_input(app, "Brine concentration [% salt]").set_value(15.0).run()
    assert not errors(app), errors(app)
    assert app.session_state["plan"]["steps"][0]["brine"]["brine_percent"] == pytest.approx(15.0)
    go(app, "Result")
    ref10 = library_result(library_copy, BRINE_PLAN).steps[0].mass
    ref15 = _library_run(library_copy, BRINE_PLAN, {"brine_fraction": 0.15}).steps[0].mass
    shown = number_of(metric(app, "Time to the salt stop (core)"))
    assert_allclose(shown, ref15.stopped_at_s / 60.0, atol=0.5)
    # a stronger brine drives more salt in: the core reaches its stop sooner (Fick's law, flux ∝ gradient)
    assert ref15.stopped_at_s < ref10.stopped_at_s
    assert_allclose(
        number_of(metric(app, "Equilibrium with the brine")), 100 * ref15.equilibrium_fraction, atol=0.005
    )


def test_bad_brine_values_are_named_in_plain_words(app):
    _open(app, BRINE_PLAN)
    number_input(app, "Brine concentration [% salt]").set_value(40.0).run()
    text = errors(app)
    # the plan's range for a salt brine: up to saturation (procplan.files.brine.MAX_BRINE_PERCENT)
    assert "**Step 1, brining, brine concentration [%]**" in text, text
    assert "26.4" in text
    number_input(app, "Brine concentration [% salt]").set_value(10.0).run()
    assert not errors(app), errors(app)
    # a brine warmer than the record was measured at: the record's range is named, the run refuses it
    number_input(app, "Medium temperature").set_value(15.0).run()
    assert any("outside this record's range (4 °C to 6 °C)" in w.value for w in app.warning)
    text = errors(app)
    assert "Step 1, brining, diffusivity record" in text and "valid from 4 to 6 °C" in text, text


def test_brine_temperature_follows_the_machine_of_the_step(app):
    _open(app, BRINE_PLAN)
    _widget(app, "radio", "Surface from").set_value("machine and settings").run()
    _widget(app, "selectbox", "Machine").set_value("brine-b1").run()
    # the brine tank's usual setting (product_library/equipment/brine-b1.toml: brine_C default -10 °C)
    assert any(c.value.startswith("Brine temperature: -10.0 °C") for c in app.caption)
    assert any("outside this record's range (4 °C to 6 °C)" in w.value for w in app.warning)
    assert "Step 1, brining, diffusivity record" in errors(app)


def test_saved_plan_keeps_the_brine_settings(app, library_copy):

    from procplan.files.library import load_library
    from procplan.files.plan import plan_from_toml

    _open(app, BRINE_PLAN)
    number_input(app, "Brine concentration [% salt]").set_value(12.5).run()
    _widget(app, "radio", "Surface mass-transfer coefficient").set_value("a measured value").run()
    number_input(app, "Surface mass-transfer coefficient [m/s]").set_value(2e-6).run()
    assert not errors(app), errors(app)
    go(app, "Sheet & files")  # the text behind 'Download the plan file'
    text = app.session_state["last_good_toml"]
    saved = plan_from_toml(text, source="saved", library=load_library(library_copy)).steps[0].brine
    assert (saved.brine_fraction, saved.k_m_m_s, saved.diffusivity) == (
        pytest.approx(0.125),
        2e-6,
        "salt-pork-loin",
    )
    assert saved.stop_when_core_fraction == pytest.approx(0.012)
    assert saved.target_mean_fraction == pytest.approx(0.03)
    again = _reopened(text)
    assert number_input(again, "Brine concentration [% salt]").value == pytest.approx(12.5)
    assert number_input(again, "Surface mass-transfer coefficient [m/s]").value == pytest.approx(2e-6)
    assert number_input(again, "Core salt to stop at").value == pytest.approx(1.2)


# --- drying -----------------------------------------------------------------------------------------------


def test_oven_roast_shows_its_drying_settings_and_the_library_numbers(app, library_copy):
    _open(app, OVEN_PLAN)
    assert number_input(app, "Dew point of the air").value == pytest.approx(45.0)
    assert number_input(app, "Air speed").value == pytest.approx(4.0)
    info = " ".join(i.value for i in app.info)
    assert "Drying in hot dry air" in info and "dew point of 45.0 °C" in info
    # Source: humidity ratio W = 0.621945 pv/(p − pv) (ASHRAE Handbook Fundamentals 2017, ch. 1 eq. 22, from
    # memory) with pv the saturation pressure at the dew point by the Magnus form of Alduchov & Eskridge,
    # J. Appl. Meteor. 35 (1996) 601-609 (from memory): 6.1094 exp(17.625 T/(T + 243.04)) hPa
    pv = 610.94 * math.exp(17.625 * 45.0 / (45.0 + 243.04))
    w_g_kg = 1000.0 * 0.621945 * pv / (101325.0 - pv)
    assert f"({w_g_kg:.0f} g water per kg of dry air)" in info
    go(app, "Result")
    ref = library_result(library_copy, OVEN_PLAN)
    d, dr = ref.steps[0].drying, ref.steps[0].drip
    assert_allclose(number_of(metric(app, "Evaporated in the step")), d.weight_loss_percent, atol=0.05)
    # the step's yield is a bracket (run.drip): all the drainable juice drained, to evaporation alone
    y_step = metric(app, "Yield of the step")
    assert f"{dr.yield_lower_percent:.1f}–{dr.yield_percent:.1f} %" == y_step
    assert_allclose(dr.yield_percent, 100.0 - d.weight_loss_percent, atol=1e-9)
    lo, hi, y_lo, y_hi = run_bracket(ref.outcomes)
    assert metric(app, "Yield of the plan") == f"{y_lo:.1f}–{y_hi:.1f} %"
    shown = " ".join([c.value for c in app.caption] + [m.value for m in app.markdown])
    assert cook_loss_text(lo, hi)[1:] in shown and yield_text(y_lo, y_hi) in shown and DRIP_CAUTION in shown
    assert "Honikel and Hamm" in shown and "Lowe" in shown and "Goñi and Salvadori" in shown
    assert_allclose(number_of(metric(app, "Wet bulb of the air")), d.wet_bulb_C, atol=0.05)
    assert_allclose(number_of(metric(app, "Surface wet for")), d.wet_until_s / 60.0, atol=0.05)
    fig = next(
        f
        for f in _figures(app)
        if any(t.get("name") == "yield, lower (all the juice drained)" for t in f["data"])
    )
    assert {"weight lost [% of the piece at the step start]", "yield [% of the piece at the step start]"} <= (
        _axis_titles(fig)
    )
    lost = _values(next(t for t in fig["data"] if t.get("name") == "evaporated")["y"])
    upper = _values(
        next(t for t in fig["data"] if t.get("name") == "cook loss, upper (all the juice drained)")["y"]
    )
    assert_allclose(upper[-1], dr.cook_loss_upper_percent, rtol=1e-6)
    assert upper[0] == pytest.approx(lost[0], abs=1e-9)
    # the curve ends at the loss the library reports for the step, and starts from nothing lost
    assert_allclose(lost[-1], d.weight_loss_percent, rtol=1e-9)
    assert lost[0] == pytest.approx(0.0, abs=1e-9)
    # the joint enters at 4 °C, below the air's 45 °C dew point: water condenses before any evaporates
    # (a surface below the dew point gains water; ASHRAE Handbook Fundamentals 2017 ch. 1, from memory)
    assert min(lost) < 0.0
    assert any("water condenses on it" in c.value for c in app.caption)


# --- words ------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("plan", [BRINE_PLAN, OVEN_PLAN])
def test_mass_transfer_pages_speak_the_planners_words(app, plan):
    import re

    from .test_words import IDENTIFIER, LONG_DECIMAL, SYMBOLS, _labels_and_numbers

    _open(app, plan)
    for page in ("Process", "Result"):
        go(app, page)
        labels, numbers = _labels_and_numbers(app)
        labels += [i.value for i in app.info] + [w.value for w in app.warning]
        named = sorted({w for t in labels for w in IDENTIFIER.findall(str(t)) if w not in SYMBOLS})
        assert not named, (page, named)
        # a DOI in a cited source is a name, not a number shown to a precision
        long = [t for t in numbers if LONG_DECIMAL.search(re.sub(r"doi:\S+", "", str(t)))]
        assert not long, (page, long[:5])
        for fig in _figures(app):
            assert not any(IDENTIFIER.findall(t) for t in _axis_titles(fig)), _axis_titles(fig)
            assert not any(IDENTIFIER.findall(str(tr.get("name", ""))) for tr in fig["data"])


def test_freezing_after_brining_sets_the_freeze_steps_own_time_beside_plank(app, library_copy):
    # Onset and end count from the plan's start (2000+ min of brine first); the caption gives the freezing
    # step's own time to the storage temperature, the figure comparable with Plank's duration.
    res = library_result(library_copy, BRINE_PLAN)
    fz, sr = res.outcomes.freezing, res.steps[1]
    _open(app, BRINE_PLAN, "Result")
    own = next(c.value for c in app.caption if "the freezing step (" in c.value)
    want = (fz.from_history.end.time_s - sr.start_s) / 60.0
    assert f"in {want:.0f} min" in own, own
    assert want > fz.plank_s / 60.0  # Plank counts the latent heat only: shorter than the full step


def test_measured_diffusivity_with_its_temperature_dependence_round_trips(app, library_copy):

    from procplan.files.library import load_library
    from procplan.files.plan import plan_from_toml
    from procplan.run.engine import run_plan

    _open(app, BRINE_PLAN)
    _widget(app, "selectbox", "Diffusivity of the solute in the product").set_value(
        "(a measured value for this product)"
    ).run()
    number_input(app, "Diffusivity D [m²/s]").set_value(3e-10).run()
    _widget(app, "checkbox", "The diffusivity changes with temperature (Arrhenius)").check().run()
    number_input(app, "Temperature the diffusivity was measured at").set_value(10.0).run()
    # the activation energy starts at the mean of the registry's fitted salt records, not at a number of the app
    from procplan.properties.diffusivity import DIFFUSIVITIES

    fitted = [r.activation_J_mol / 1e3 for r in DIFFUSIVITIES.values() if r.activation_J_mol is not None]
    start = number_input(app, "Activation energy [kJ/mol]").value
    assert start == pytest.approx(sum(fitted) / len(fitted), abs=0.05)
    number_input(app, "Partition coefficient (product water to brine)").set_value(0.8).run()
    # above the plan's range (procplan.files.brine: 0 to 150 kJ/mol): named at its field in words
    number_input(app, "Activation energy [kJ/mol]").set_value(200.0).run()
    text = errors(app)
    assert "**Step 1, brining, activation energy [kJ/mol]**" in text and "150" in text, text
    number_input(app, "Activation energy [kJ/mol]").set_value(30.0).run()
    assert not errors(app), errors(app)
    go(app, "Sheet & files")
    text = app.session_state["last_good_toml"]
    lib = load_library(library_copy)
    plan = plan_from_toml(text, source="saved", library=lib)
    saved = plan.steps[0].brine
    assert (saved.diffusivity, saved.D_m2_s, saved.reference_C) == (None, pytest.approx(3e-10), 10.0)
    assert (saved.activation_J_mol, saved.partition) == (pytest.approx(30e3), pytest.approx(0.8))
    # the Result page's numbers are the library's run of the saved plan
    go(app, "Result")
    m = run_plan(plan, library=lib).steps[0].mass
    assert_allclose(number_of(metric(app, "Time to the salt stop (core)")), m.stopped_at_s / 60.0, atol=0.5)
    assert_allclose(
        number_of(metric(app, "Equilibrium with the brine")), 100 * m.equilibrium_fraction, atol=0.005
    )
    # reopened: the values in the widgets, and saved back unchanged
    again = _reopened(text)
    assert number_input(again, "Diffusivity D [m²/s]").value == pytest.approx(3e-10)
    assert number_input(again, "Temperature the diffusivity was measured at").value == pytest.approx(10.0)
    assert number_input(again, "Activation energy [kJ/mol]").value == pytest.approx(30.0)
    assert number_input(again, "Partition coefficient (product water to brine)").value == pytest.approx(0.8)
    go(again, "Sheet & files")
    assert plan_from_toml(again.session_state["last_good_toml"], source="again", library=lib).steps[
        0
    ].brine == (saved)


def test_measured_diffusivity_at_a_temperature_alone_is_saved_back_unchanged(app, library_copy):
    from procplan.files.library import load_library
    from procplan.files.plan import plan_from_toml

    _open(app, BRINE_PLAN, "Sheet & files")
    text = app.session_state["last_good_toml"].replace(
        'diffusivity = "salt-pork-loin"', "D_m2_s = 3e-10\nreference_C = 5.0"
    )
    lib = load_library(library_copy)
    given = plan_from_toml(text, source="given", library=lib).steps[0].brine
    assert (given.reference_C, given.activation_J_mol) == (5.0, None)
    app.text_area(key="paste_plan").set_value(text)
    app.button(key="paste_btn").click().run()
    go(app, "Process")
    assert _widget(app, "checkbox", "The diffusivity changes with temperature (Arrhenius)").value
    assert number_input(app, "Temperature the diffusivity was measured at").value == pytest.approx(5.0)
    assert not errors(app), errors(app)
    go(app, "Sheet & files")
    assert plan_from_toml(app.session_state["last_good_toml"], source="again", library=lib).steps[
        0
    ].brine == (given)
