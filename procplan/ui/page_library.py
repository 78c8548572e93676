"""Library page: edit or create cooling/holding rules (stages and bands) and machines (kind, capacity,
refrigeration temperatures, setting ranges), validated field by field by the file parsers and saved
atomically to the library folder."""

from __future__ import annotations

import copy

import streamlit as st

from procplan.ui import adapter, adapter_library, state, widgets
from procplan.units import f_to_c

NEW = "(a new one)"
RULE_KINDS = {
    "cooling": "cooling (stages down)",
    "heating": "heating (stages up)",
    "holding": "holding (bands)",
    "storage": "storage (bands)",
}
POINTS = {"core": "core", "surface": "surface", "mean": "mean (volume average)"}
CLOCKS = {"stage": "from the start of this stage", "rule": "from the start of the rule"}
SETTING_LABELS = {
    "air_C": "Air temperature",
    "air_speed_m_s": "Air speed [m/s]",
    "relative_humidity": "Relative humidity [%]",
    "emissivity": "Surface emissivity (default for products that state none)",
    "water_C": "Water temperature",
    "water_speed_m_s": "Water speed [m/s]",
    "brine_C": "Brine temperature",
    "brine_speed_m_s": "Brine speed [m/s]",
    "steam_C": "Steam temperature",
}
BLANK_RULE = {
    "name": "new-rule",
    "title": "",
    "source": "",
    "kind": "cooling",
    "stages": [{"to_C": 5.0, "within_min": 240.0}],
}
BLANK_MACHINE = {
    "id": "new-machine",
    "name": "New machine",
    "kind": "blast-chiller",
    "medium": "air",
    "capacity_kW": 10.0,
    "evaporating_C": -25.0,
    "condensing_C": 40.0,
    "settings": {
        "air_C": {"min": -10.0, "max": 5.0, "default": 0.0},
        "air_speed_m_s": {"min": 1.0, "max": 5.0, "default": 3.0},
    },
}


WIDGET_PREFIX = {"rule": "r.", "machine": "m."}
#: The rule being edited (its marker) once its source was typed or a save was tried: an empty source is then
#: named as a fault, before that only hinted at.
SOURCE_SEEN = "lib_rule_source_seen"


def _forget_fields(prefix: str) -> None:
    """Drop the editor's field values held by the session, so its fields show the record just picked."""
    for k in [
        k for k in st.session_state if str(k).split(":")[3:4] and str(k).split(":")[3].startswith(prefix)
    ]:
        del st.session_state[k]


def _edited(kind: str, pick: str, load) -> dict:
    """The record being edited (kept in the session until another is picked or the library changes)."""
    key = f"lib_edit_{kind}"
    marker = (pick, state.generation())
    held = st.session_state.get(key)
    if held is None or held["marker"] != marker:
        held = {"marker": marker, "data": load(pick)}
        st.session_state[key] = held
        _forget_fields(WIDGET_PREFIX[kind])
    return held["data"]


def _limit_C(d: dict, key: str) -> float | None:
    """A limit in °C from ``key_C`` or the published ``key_F``."""
    if d.get(f"{key}_C") is not None:
        return float(d[f"{key}_C"])
    if d.get(f"{key}_F") is not None:
        return float(f_to_c(float(d[f"{key}_F"])))
    return None


def _limit(d: dict, key: str, label: str, wkey: str, *, optional: bool, default_C: float) -> None:
    """A rule limit in the display unit. An unchanged value keeps the published figures (°C and/or °F); a
    changed one is written in °C alone."""
    old = _limit_C(d, key)
    if optional:
        on = st.checkbox(label, value=old is not None, key=state.key(wkey, "on"))
        if not on:
            d.pop(f"{key}_C", None), d.pop(f"{key}_F", None)
            return
    new = widgets.temperature(
        label if not optional else f"{label}, value", default_C if old is None else old, wkey
    )
    if old is None or abs(new - old) > 1e-6:
        d[f"{key}_C"] = round(new, 4)
        d.pop(f"{key}_F", None)


def _rule_header(d: dict, errs: widgets.FieldErrors) -> None:
    c = st.columns([2, 3])
    d["name"] = c[0].text_input("File name", value=d.get("name", ""), key=state.key("r.name"),
                                help="Lower-case letters, digits, '.', '_' or '-'.")  # fmt: skip
    with c[0]:
        errs.mark("name")
    d["title"] = c[1].text_input("Title", value=d.get("title", ""), key=state.key("r.title"))
    with c[1]:
        errs.mark("title")
    d["source"] = st.text_input(
        "Source (the regulation, guideline or study, with its section)",
        value=d.get("source", ""),
        key=state.key("r.source"),
    )
    errs.mark("source")
    c = st.columns(3)
    kinds = list(RULE_KINDS)
    d["kind"] = c[0].selectbox("Kind", kinds, index=kinds.index(d.get("kind", "cooling")),
                               format_func=RULE_KINDS.get, key=state.key("r.kind"))  # fmt: skip
    points = list(POINTS)
    d["point"] = c[1].selectbox("Checked at", points, index=points.index(d.get("point", "core")),
                                format_func=POINTS.get, key=state.key("r.point"))  # fmt: skip
    confirmed = c[2].checkbox(
        "Source checked against the text",
        value=d.get("confirmed", True),
        key=state.key("r.confirmed"),
        help="Unticked, the rule is shown everywhere as indicative, to be confirmed with your process authority.",
    )
    d["confirmed"] = confirmed
    notes = st.text_input("Notes", value=d.get("notes", ""), key=state.key("r.notes"))
    if notes.strip():
        d["notes"] = notes
    else:
        d.pop("notes", None)


def _stages(d: dict, errs: widgets.FieldErrors) -> None:
    st.markdown("**Stages** (the product's point must go from one temperature to another within a time)")
    stages = d.setdefault("stages", [])
    remove = None
    for i, s in enumerate(stages):
        with st.container(border=True):
            c = st.columns([3, 3, 2, 3, 1], vertical_alignment="bottom")
            with c[0]:
                _limit(s, "from", "From a temperature", f"r.st.from.{i}", optional=True, default_C=60.0)
            with c[1]:
                _limit(
                    s, "to", f"Stage {i + 1}: down or up to", f"r.st.to.{i}", optional=False, default_C=5.0
                )
            with c[2]:
                s["within_min"] = widgets.duration("Within", s.get("within_min", 120.0), f"r.st.within.{i}")
            clocks = list(CLOCKS)
            s["clock"] = c[3].selectbox("Time counted", clocks, index=clocks.index(s.get("clock", "stage")),
                                        format_func=CLOCKS.get, key=state.key("r.st.clock", i))  # fmt: skip
            if s["clock"] == "stage":
                s.pop("clock")
            if c[4].button("✕", key=state.key("r.st.rm", i), help=f"Remove stage {i + 1}"):
                remove = i
            errs.mark(f"stages[{i}]")
    _add_remove(stages, remove, "r.st.add", "Add a stage", {"to_C": 5.0, "within_min": 240.0})
    if not stages:
        d.pop("stages")


def _bands(d: dict, errs: widgets.FieldErrors) -> None:
    st.markdown("**Bands** (a temperature range to stay in, with the time allowed outside)")
    bands = d.setdefault("bands", [])
    remove = None
    for i, b in enumerate(bands):
        with st.container(border=True):
            c = st.columns([3, 3, 3, 3, 1], vertical_alignment="bottom")
            b["name"] = c[0].text_input(
                f"Band {i + 1}", value=b.get("name", ""), key=state.key("r.b.name", i)
            )
            with c[1]:
                _limit(b, "low", "Lowest temperature", f"r.b.low.{i}", optional=True, default_C=2.0)
            with c[2]:
                _limit(b, "high", "Highest temperature", f"r.b.high.{i}", optional=True, default_C=8.0)
            with c[3]:
                b["max_outside_min"] = widgets.duration(
                    "Time allowed outside", b.get("max_outside_min", 0.0), f"r.b.out.{i}", minimum_min=0.0
                )
            if c[4].button("✕", key=state.key("r.b.rm", i), help=f"Remove band {i + 1}"):
                remove = i
            errs.mark(f"bands[{i}]")
    _add_remove(
        bands,
        remove,
        "r.b.add",
        "Add a band",
        {"name": "band", "low_C": 2.0, "high_C": 8.0, "max_outside_min": 0.0},
    )
    if not bands:
        d.pop("bands")


def _add_remove(items: list, remove: int | None, key: str, label: str, blank: dict) -> None:
    if st.button(label, key=state.key(key)):
        items.append(copy.deepcopy(blank))
        state.touch()
        st.rerun()
    if remove is not None:
        items.pop(remove)
        state.touch()
        st.rerun()


def _save_row(kind: str, name: str, exists: bool, checked, save, *, enabled: bool | None = None) -> bool:
    c = st.columns([1, 2, 2])
    overwrite = c[1].checkbox(
        "Replace the saved one of this name",
        value=False,
        key=state.key(f"{kind}.overwrite"),
        disabled=not exists,
    )
    if exists and not overwrite:
        c[2].caption(f"'{name}' is already in the library; it is replaced only when you tick the box.")
    ok = checked.ok if enabled is None else enabled
    if c[0].button("Save to the library", key=f"{kind}.save", disabled=not ok, type="primary"):
        out = save(overwrite and exists)
        if out.ok:
            state.reload_library()
            st.session_state[state.NOTICE] = f"Saved '{name}' to {out.value}."
            st.rerun()
        widgets.problems(out.problems, "Not saved:")
        return True
    return False


def rules_editor(lib) -> None:
    names = sorted(lib.rules)
    pick = st.selectbox("Rule to edit", [NEW, *names], key="lib_rule_pick",
                        format_func=lambda r: r if r == NEW else (lib.rules[r].title or r))  # fmt: skip
    d = _edited(
        "rule",
        pick,
        lambda p: copy.deepcopy(BLANK_RULE) if p == NEW else adapter_library.rule_dict(p, state.generation()),
    )
    errs = widgets.FieldErrors()
    _rule_header(d, errs)
    # a new rule's empty source is a hint, not a fault, until the planner types one in or tries to save
    marker = st.session_state["lib_edit_rule"]["marker"]
    if str(d.get("source", "")).strip():
        st.session_state[SOURCE_SEEN] = marker
    quiet = pick == NEW and st.session_state.get(SOURCE_SEEN) != marker
    _stages(d, errs)
    _bands(d, errs)
    checked = adapter_library.check_rule(copy.deepcopy(d))
    problems = [p for p in checked.problems if not (quiet and p.field == "source")]
    if quiet and len(problems) < len(checked.problems):
        errs.hint("source", "Give the regulation, guideline or study this rule comes from; a rule is saved only "
                  "with its source.")  # fmt: skip
    widgets.problems(errs.show(problems), "Also to correct:")
    if checked.ok:
        st.success(
            f"The rule is valid: {len(checked.value.stages)} stage(s), {len(checked.value.bands)} band(s)."
        )
    if _save_row("rule", d.get("name", ""), d.get("name") in lib.rules, checked,
                 lambda ow: adapter_library.save_rule(copy.deepcopy(d), overwrite=ow),
                 enabled=not problems):  # fmt: skip
        st.session_state[SOURCE_SEEN] = marker


def _setting_label(key: str) -> str:
    """A setting's name in words: the table above, else the library's description of it."""
    if key in SETTING_LABELS:
        return SETTING_LABELS[key]
    spec = adapter_library.setting_spec(key)
    return spec.description.capitalize()[:60] + (f" [{spec.unit}]" if spec.unit and spec.unit != "°C" else "")


def _setting_range(key: str, rng: dict, wkey: str) -> dict:
    """min / usual / max of one setting, temperatures in the display unit, humidity in %."""
    spec = adapter_library.setting_spec(key)
    label = _setting_label(key)
    c = st.columns(3)
    out = {}
    for col, part, word in zip(c, ("min", "default", "max"), ("lowest", "usual", "highest"), strict=True):
        value = rng.get(
            part,
            spec.minimum
            if part == "min"
            else spec.maximum
            if part == "max"
            else (spec.minimum + spec.maximum) / 2,
        )
        with col:
            if spec.unit == "°C":
                out[part] = widgets.temperature(f"{label}, {word}", value, f"{wkey}.{part}")
            elif key == "relative_humidity":
                out[part] = round(
                    widgets.number(
                        f"{label[:-4]}, {word} [%]", value * 100, f"{wkey}.{part}", step=1.0, fmt="%.0f"
                    )
                    / 100,
                    4,
                )
            else:
                out[part] = widgets.number(
                    f"{label}, {word}",
                    value,
                    f"{wkey}.{part}",
                    step=0.05 if spec.maximum <= 1 else 0.1,
                    fmt="%.2f",
                )
    return out


def _machine_fields(d: dict, errs: widgets.FieldErrors) -> None:
    kinds = adapter_library.machine_kinds()
    c = st.columns([2, 3, 2])
    d["id"] = c[0].text_input("File name", value=d.get("id", ""), key=state.key("m.id"),
                              help="Lower-case letters, digits, '.', '_' or '-'; plans name the machine by it.")  # fmt: skip
    with c[0]:
        errs.mark("id")
    d["name"] = c[1].text_input("Name", value=d.get("name", ""), key=state.key("m.name"))
    with c[1]:
        errs.mark("name")
    names = list(kinds)
    kind = c[2].selectbox("Kind", names, index=names.index(d.get("kind")) if d.get("kind") in names else 0,
                          format_func=lambda k: f"{k.replace('-', ' ')} ({kinds[k]})", key=state.key("m.kind"))  # fmt: skip
    if kind != d.get("kind"):
        d["kind"], d["medium"] = kind, kinds[kind]
        d["settings"] = {}
    d["medium"] = kinds[kind]
    c = st.columns([3, 2])
    d["description"] = c[0].text_input("Description", value=d.get("description", ""), key=state.key("m.desc"))
    d["plant"] = c[1].text_input("Plant", value=d.get("plant", ""), key=state.key("m.plant"))
    for k in ("description", "plant"):
        if not d[k].strip():
            d.pop(k)
    c = st.columns(3)
    with c[0]:
        d["capacity_kW"] = widgets.number(
            "Capacity [kW]", d.get("capacity_kW", 10.0), "m.cap", step=1.0, fmt="%.1f"
        )
        errs.mark("capacity_kW")
    if kind in adapter_library.refrigerated_kinds():
        with c[1]:
            d["evaporating_C"] = widgets.temperature(
                "Evaporating temperature", d.get("evaporating_C", -25.0), "m.evap"
            )
            errs.mark("evaporating_C")
        with c[2]:
            d["condensing_C"] = widgets.temperature(
                "Condensing temperature", d.get("condensing_C", 40.0), "m.cond"
            )
            errs.mark("condensing_C")
    else:
        d.pop("evaporating_C", None), d.pop("condensing_C", None)


def _machine_settings(d: dict, errs: widgets.FieldErrors) -> None:
    st.markdown("**Setting ranges** (what the machine can be set to, and its usual setting)")
    required, optional = adapter_library.medium_settings(d["medium"])
    settings = d.setdefault("settings", {})
    for key in (*required, *optional):
        with st.container(border=True):
            if key in optional:
                on = st.checkbox(f"{_setting_label(key)}: the machine sets it", value=key in settings,
                                 key=state.key("m.on", key))  # fmt: skip
                if not on:
                    settings.pop(key, None)
                    continue
            settings[key] = _setting_range(key, settings.get(key, {}), f"m.set.{key}")
            errs.mark(f"settings.{key}")
    errs.mark("settings")


def machines_editor(lib) -> None:
    ids = sorted(lib.equipment)
    pick = st.selectbox("Machine to edit", [NEW, *ids], key="lib_machine_pick",
                        format_func=lambda e: e if e == NEW else lib.equipment[e].name)  # fmt: skip
    d = _edited(
        "machine",
        pick,
        lambda p: (
            copy.deepcopy(BLANK_MACHINE) if p == NEW else adapter_library.machine_dict(p, state.generation())
        ),
    )
    errs = widgets.FieldErrors()
    _machine_fields(d, errs)
    _machine_settings(d, errs)
    checked = adapter_library.check_machine(copy.deepcopy(d))
    widgets.problems(errs.show(checked.problems), "Also to correct:")
    if checked.ok:
        st.success("The machine is valid.")
    _save_row("machine", d.get("id", ""), d.get("id") in lib.equipment, checked,
              lambda ow: adapter_library.save_machine(copy.deepcopy(d), overwrite=ow))  # fmt: skip


def render() -> None:
    st.header("Library")
    st.caption(
        f"Rules and machines of the library in {adapter.library_root()}. Every change is checked as the "
        "library checks its files; a save writes the file whole or not at all."
    )
    lib = adapter.library(state.generation())
    rules_tab, machines_tab = st.tabs(["Cooling and holding rules", "Machines"])
    with rules_tab:
        rules_editor(lib)
    with machines_tab:
        machines_editor(lib)
