"""The result page of a cold-chain excursion and of a thawing plan: the numbers shown equal the library's."""

from __future__ import annotations

from numpy.testing import assert_allclose

from .test_app import errors, go, library_result, metric, number_of


def _open(app, name: str):
    go(app, "Sheet & files")
    app.selectbox(key="open_lib_plan").set_value(name)
    app.button(key="open_lib_btn").click().run()
    return go(app, "Result")


def test_vial_excursion_shows_its_budget_and_mean_kinetic_temperature(app, library_copy):
    _open(app, "vial-excursion")
    ref = library_result(library_copy, "vial-excursion")
    mk = ref.outcomes.mean_kinetic
    assert_allclose(number_of(metric(app, "Mean kinetic temperature")), mk.mean_kinetic_C, atol=0.05)
    table = app.dataframe[0].value
    assert "stability budget" in set(table["stage"])
    budget = table[table["stage"] == "stability budget"].iloc[0]
    assert f"{ref.outcomes.rule_check.budget.remaining_above_h:.2f} h" in budget["margin"]
    assert not errors(app)


def test_thawing_plan_shows_the_core_time_beside_plank(app, library_copy):
    _open(app, "cod-block-water-thaw")
    th = library_result(library_copy, "cod-block-water-thaw").outcomes.thawing
    shown = number_of(next(m.value for m in app.metric if m.label.endswith("(tempered)")))
    assert_allclose(shown, (th.from_history.time_s - th.from_history.start_s) / 60.0, atol=0.5)
    assert_allclose(number_of(metric(app, "Plank's thawing time")), th.plank_s / 60.0, atol=0.5)
    assert not errors(app)
