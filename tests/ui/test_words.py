"""What the planner reads: no program identifiers on screen and no number beyond the display precision.

Every page is opened (with the studies run, so that their tables are on screen too) and every widget
label and option, metric label and value, table and dataframe header and cell is read back.
"""

from __future__ import annotations

import json
import re

import pytest

from procplan.ui.main import PAGES

#: Most decimals any number on screen may carry (the display precision of the app).
MAX_DECIMALS = 3
IDENTIFIER = re.compile(r"\b[A-Za-z]\w*_\w+\b")  # e.g. medium_C, h_factor, time_to_target_min
LONG_DECIMAL = re.compile(r"\d\.\d{" + str(MAX_DECIMALS + 1) + ",}")
WIDGETS = ("number_input", "text_input", "text_area", "selectbox", "multiselect", "radio", "checkbox")
#: Symbols of the surface breakdown that read as written in the textbooks (h with a subscript).
SYMBOLS = {"h_conv", "h_rad", "h_eff"}


def go(at, page: str):
    script = next(script for title, script, *_ in PAGES if title == page)
    at.switch_page(f"procplan/ui/pages/{script}").run()
    assert not at.exception, at.exception
    return at


def number_input(at, prefix: str):
    return next(w for w in at.number_input if w.label.startswith(prefix))


def _identifiers(text: str) -> list[str]:
    return [w for w in IDENTIFIER.findall(str(text)) if w not in SYMBOLS]


def _decimals_of_format(fmt: str) -> int:
    m = re.search(r"\.(\d+)[fg]", fmt or "")
    return int(m.group(1)) if m else 0


def _labels_and_numbers(at) -> tuple[list[str], list[str]]:
    """(texts that must hold no identifier, texts whose numbers must respect the precision)."""
    labels, numbers = [], []
    for kind in WIDGETS:
        for w in getattr(at, kind):
            labels.append(w.label)
            labels.extend(str(o) for o in getattr(w, "options", []) or [])
            if kind == "number_input":
                assert _decimals_of_format(w.proto.format) <= MAX_DECIMALS, (w.label, w.proto.format)
    for m in at.metric:
        labels.append(m.label)
        numbers.append(m.value)
    for t in at.table:
        frame = t.value
        labels.extend(str(c) for c in frame.columns)
        numbers.extend(str(v) for v in frame.to_numpy().ravel())
    for d in at.dataframe:
        frame = d.value
        labels.extend(str(c) for c in frame.columns)
        config = json.loads(d.proto.columns or "{}")
        for col in frame.columns:
            fmt = ((config.get(str(col)) or {}).get("type_config") or {}).get("format")
            if fmt:
                assert _decimals_of_format(fmt) <= MAX_DECIMALS, (col, fmt)
                continue
            for v in frame[col]:
                if isinstance(v, float) and v == v and abs(v) < 1e15:
                    assert round(v, MAX_DECIMALS) == v, (col, v)
                else:
                    numbers.append(str(v))
    numbers.extend(c.value for c in at.caption)
    numbers.extend(m.value for m in at.markdown)
    return labels, numbers


def _check(at, where: str) -> None:
    assert not at.exception, at.exception
    labels, numbers = _labels_and_numbers(at)
    named = sorted({w for text in labels for w in _identifiers(text)})
    assert not named, f"{where}: identifiers on screen {named}"
    long = [text for text in numbers if LONG_DECIMAL.search(str(text))]
    assert not long, f"{where}: numbers beyond {MAX_DECIMALS} decimals: {long[:5]}"


def _run_studies(app) -> None:
    app.selectbox(key="rs_param").set_value("medium_C")
    app.selectbox(key="rs_goal").set_value("time")
    number_input(app, "Allowed time").set_value(240.0)
    app.button(key="rs_go").click().run()
    app.multiselect(key="mc_vars").set_value(["h_factor", "start_C"]).run()
    number_input(app, "Samples").set_value(40)
    app.button(key="mc_go").click().run()
    app.multiselect(key="sw_products").set_value(["soup-pouch"])
    app.multiselect(key="sw_machines").set_value(["chiller-b1"])
    app.button(key="sw_go").click().run()
    app.button(key="scen_add").click().run()


@pytest.mark.parametrize(
    "page", ["Product", "Process", "Result", "Compare & studies", "Sheet & files", "Library", "Site"]
)
def test_no_identifiers_and_no_excess_decimals(app, page):
    go(app, page)
    if page == "Compare & studies":
        _run_studies(app)
    _check(app, page)


def test_a_chill_plan_shows_no_unrequested_lethality(app):
    # the demo plan chills a cooked roulade: its surface starts above 60 °C, but nobody asked for a cook value
    go(app, "Result")
    assert not any(m.label.startswith(("F at the", "Required F", "Lethality")) for m in app.metric)
    assert not any(s.value == "Lethality" for s in app.subheader)


def test_variability_widgets_build_the_distribution(app):
    go(app, "Compare & studies")
    app.multiselect(key="mc_vars").set_value(["start_C"]).run()
    kind = next(s for s in app.selectbox if s.label == "Distribution")
    assert kind.value == "normal"
    kind.set_value("uniform").run()
    lowest = next(w for w in app.number_input if w.label == "Lowest [°C]")
    highest = next(w for w in app.number_input if w.label == "Highest [°C]")
    lowest.set_value(80.0)
    highest.set_value(70.0)
    app.button(key="mc_go").click().run()
    assert not app.exception, app.exception
    # lowest above highest: the library's check names the field, as for a typed distribution
    assert "uniform.high" in "\n".join(e.value for e in app.error)


def test_the_plan_survives_a_reload_through_the_address(app, library_copy, monkeypatch):
    from streamlit.testing.v1 import AppTest

    from procplan.ui.main import PAGE_DIR

    APP = PAGE_DIR.parents[2] / "app.py"
    go(app, "Process")
    number_input(app, "Product temperature at the start").set_value(70.0).run()
    token = app.query_params["plan"]
    assert isinstance(token, str) and len(token) < 4000
    fresh = AppTest.from_file(str(APP), default_timeout=180)
    fresh.query_params["plan"] = token
    fresh.run()
    assert not fresh.exception, fresh.exception
    assert fresh.session_state["plan"]["start"]["temperature_C"] == pytest.approx(70.0)
    # an address that is not a plan falls back to the demo plan and says so
    broken = AppTest.from_file(str(APP), default_timeout=180)
    broken.query_params["plan"] = "not-a-plan"
    broken.run()
    assert not broken.exception
    assert broken.session_state["plan"]["start"]["temperature_C"] == pytest.approx(74.0)
    assert any("could not be read" in s.value for s in broken.success)
