"""The heat-penetration trial panel on the studies page: the synthetic demo trial analysed in the app shows
the verdict, the slowest unit and one row per probe, in the planner's words."""

from __future__ import annotations

from .test_words import _check, go


def test_demo_trial_in_the_app(app):
    go(app, "Compare & studies")
    app.checkbox(key="trial_demo").check().run()
    assert not app.exception, app.exception
    app.button(key="trial_go").click().run()
    assert not app.exception, app.exception
    assert any("lower tolerance bound" in s.value for s in app.success), [s.value for s in app.success]
    labels = {m.label: m.value for m in app.metric}
    assert labels["Slowest probe"] == "TC2"
    probes = next(d.value for d in app.dataframe if "Probe" in d.value.columns)
    assert len(probes) == 12 and probes["Probe"].str.contains("slowest").sum() == 3
    _check(app, "trial panel")


def test_demo_trial_judged_by_a_z_value_shows_balls_time(app):
    go(app, "Compare & studies")
    app.checkbox(key="trial_demo").check().run()
    app.checkbox(key="trial_own_lethality").check().run()
    assert not app.exception, app.exception
    app.button(key="trial_go").click().run()
    assert not app.exception, app.exception
    probes = next(d.value for d in app.dataframe if "Probe" in d.value.columns)
    assert (probes["Formula-method time"] != "—").all() and (probes["General-method time"] != "—").all()
    _check(app, "trial panel with a z-value requirement")
