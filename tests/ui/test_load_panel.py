"""The batch in its machine on the app's pages: the capacity block of the Result page and the largest-batch study
show the library's own numbers (run.machine_load, studies.batch_size)."""

from __future__ import annotations

from numpy.testing import assert_allclose

from .test_app import errors, go, library_result, number_of


def _open(app, name: str):
    go(app, "Sheet & files")
    app.selectbox(key="open_lib_plan").set_value(name)
    app.button(key="open_lib_btn").click().run()
    return go(app, "Result")


def test_loaded_chiller_shows_its_limit_and_the_warning(app, library_copy):
    _open(app, "beef-joint-roast-chill")
    ref = library_result(library_copy, "beef-joint-roast-chill")
    loads = [sr.machine_load for sr in ref.steps if sr.machine_load is not None]
    assert loads and any(not m.held for m in loads)
    assert any(s.value == "The batch in the machine" for s in app.subheader)
    shown = [number_of(m.value) for m in app.metric if m.label == "Plant at its limit"]
    assert_allclose(shown, [m.time_at_limit_s / 60.0 for m in loads], atol=0.5)
    bars = [p.proto.text for p in app.get("progress")]
    for m in loads:
        assert any(f"{m.peak_load_kW:.1f} kW against a {m.capacity_kW:.1f} kW plant" in b for b in bars)
    assert any("cannot hold" in w.value for w in app.warning)
    assert not errors(app)


def test_largest_batch_equals_the_library_answer(app, library_copy):
    from procplan.files.library import load_library
    from procplan.studies.batch_size import largest_batch

    _open(app, "beef-joint-roast-chill")
    go(app, "Compare & studies")
    app.selectbox(key="lb_step").set_value("3: blast chill")
    app.selectbox(key="lb_goal").set_value("rule").run()
    app.button(key="lb_go").click().run()
    assert not app.exception, app.exception
    lib = load_library(library_copy)
    ref = largest_batch(lib.plan("beef-joint-roast-chill"), step_index=2, goal="rule", library=lib)
    shown = next(m.value for m in app.metric if m.label == "Largest batch")
    assert shown == ("none" if ref.pieces is None else f"{ref.pieces} pieces")
    assert not errors(app)
