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
    assert "4 samples, full model per sample" in _captions(app)
    # another widget's change does not run the study again: the session keeps its result
    app.selectbox(key="mc_step").set_value(app.selectbox(key="mc_step").options[0]).run()
    assert "4 samples, full model per sample" in _captions(app)


def test_stop_leaves_the_page_usable(app):
    _open_vial(app)
    _choose(app, 2)
    app.button(key="mc_go").click().run()
    # a study that ended shows no stop button (it stands only while the study runs)
    assert "mc_stop" not in [b.key for b in app.button]
    _choose(app, 3)
    app.button(key="mc_go").click()
    # the stop arrives before the new study runs (as a click during the run would: the button stands in the
    # page only while the study runs, so the test sets the click the browser would send)
    app.session_state["mc_stop"] = True
    app.run()
    assert not app.exception, app.exception
    assert any("stopped" in i.value for i in app.info)
    # the page still works: the study runs again when asked
    app.button(key="mc_go").click().run()
    assert not app.exception, app.exception
    assert "4 samples, full model per sample" in _captions(app)


# --- the catalogue sweep: the same progress and stop -------------------------------------------------------


def _sweep_choice(app, machines):
    app.multiselect(key="sw_products").set_value(["soup-pouch"])
    app.multiselect(key="sw_machines").set_value(machines)


# the machines' names in the library (product_library/equipment/chiller-b1/b2.toml), as the page shows them
CHILLER_B1 = "Blast chiller B1 (kitchen, 10 GN trays)"
CHILLER_B2 = "Blast chiller B2 (Line 2 roll-in, two trolleys)"


def _machines_shown(app):
    return [list(d.value["Machine"]) for d in app.dataframe if "Machine" in d.value.columns]


def test_sweep_result_is_kept_and_its_stop_leaves_the_page_usable(app):
    from .test_app import go

    go(app, "Compare & studies")
    _sweep_choice(app, ["chiller-b1"])
    app.button(key="sw_go").click().run()
    assert not app.exception, app.exception
    assert _machines_shown(app) == [[CHILLER_B1]]
    assert "sw_stop" not in [b.key for b in app.button]
    # a new sweep asked for and stopped before it runs (the click the browser would send during the run)
    _sweep_choice(app, ["chiller-b2"])
    app.button(key="sw_go").click()
    app.session_state["sw_stop"] = True
    app.run()
    assert not app.exception, app.exception
    assert any("sweep was stopped" in i.value for i in app.info)
    assert _machines_shown(app) == []
    # it runs again when asked, and another widget's change keeps its table (saying it is of the last sweep)
    app.button(key="sw_go").click().run()
    assert not app.exception, app.exception
    assert _machines_shown(app) == [[CHILLER_B2]]
    _sweep_choice(app, ["chiller-b1"])
    app.run()
    assert _machines_shown(app) == [[CHILLER_B2]]
    assert "table is of the last sweep run" in _captions(app)


def test_run_kept_reports_progress_and_keeps_the_result():
    from streamlit.testing.v1 import AppTest

    def script():
        import streamlit as st

        from procplan.ui import study_progress

        calls = st.session_state.setdefault("calls", [])

        def run(progress):
            calls.append("run")
            for i in range(1, 4):
                progress(i, 3)
            return 42

        st.session_state["out"] = study_progress.run_kept(
            "x", ("a",), run, what="runs", stop_label="Stop", stopped_text="stopped"
        )

    at = AppTest.from_function(script)
    at.run()
    at.run()  # the second run takes the kept result
    assert not at.exception, at.exception
    assert at.session_state["out"] == 42 and at.session_state["calls"] == ["run"]
    assert at.session_state["x_result"] == (("a",), 42)
