"""The heat-penetration trial panel on the studies page: the synthetic demo trial analysed in the app shows
the verdict, the slowest unit and one row per probe, in the planner's words, and offers the study as a
workbook (read back with openpyxl) and as JSON with the same numbers."""

from __future__ import annotations

import io
import json

import pytest

from .test_words import _check, go


def _downloads(app) -> None:
    """The panel's workbook and JSON hold the figures the panel shows."""
    from openpyxl import load_workbook

    from procplan.caution import CAUTION
    from procplan.ui import adapter, adapter_outputs, state, trial_panel

    assert {"trial_xlsx", "trial_json", "trial_pdf"} <= {
        getattr(b, "key", None) for b in app.get("download_button")
    }
    out = trial_panel._study(*app.session_state["trial_request"], adapter.library_root(), state.generation())
    assert out.ok
    shown = next(d.value for d in app.dataframe if "Probe" in d.value.columns)
    wb = load_workbook(io.BytesIO(adapter_outputs.trial_xlsx(out.value)))
    rows = list(wb["Probes"].iter_rows(values_only=True))
    col = rows[0].index("measured lethality F [min]")
    assert [f"{r[col]:.2f}" for r in rows[1:]] == list(shown["Lethality F [min]"])
    study_rows = {r[0]: r[1] for r in wb["Study"].iter_rows(values_only=True)}
    assert study_rows["source of the preset"] == out.value.lethality.preset.source_text
    doc = json.loads(adapter_outputs.trial_json(out.value))
    assert doc["caution"] == CAUTION
    assert [p["F_min"] for p in doc["probes"]] == pytest.approx([r[col] for r in rows[1:]], rel=1e-12)


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
    _downloads(app)
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
