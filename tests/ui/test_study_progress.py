"""The variability study in the app: its time estimate before it runs, and a stop that leaves the page usable."""

from __future__ import annotations

from .test_app import _open_vial, number_input


def _captions(at) -> str:
    return "\n".join(c.value for c in at.caption)


def _choose(app, seed: int) -> None:
    app.multiselect(key="mc_vars").set_value(["h_factor"])
    app.text_input(key="mc_spec_h_factor").set_value("uniform:0.8,1.2")
    number_input(app, "Samples").set_value(4)
    number_input(app, "Seed").set_value(seed)
    app.selectbox(key="mc_method").set_value("run")


def test_estimate_shown_and_result_kept(app):
    _open_vial(app)
    _choose(app, 1)
    app.button(key="mc_go").click().run()
    assert not app.exception, app.exception
    assert "Estimated time: up to" in _captions(app)
    assert "4 samples, method run" in _captions(app)
    # another widget's change does not run the study again: the session keeps its result
    app.selectbox(key="mc_step").set_value(app.selectbox(key="mc_step").options[0]).run()
    assert "4 samples, method run" in _captions(app)


def test_stop_leaves_the_page_usable(app):
    _open_vial(app)
    _choose(app, 2)
    app.button(key="mc_go").click().run()
    _choose(app, 3)
    app.button(key="mc_go").click()
    app.button(key="mc_stop").click().run()  # the stop arrives before the new study runs
    assert not app.exception, app.exception
    assert any("stopped" in i.value for i in app.info)
    # the page still works: the study runs again when asked
    app.button(key="mc_go").click().run()
    assert not app.exception, app.exception
    assert "4 samples, method run" in _captions(app)
