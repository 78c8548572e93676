"""Site page: the plant's settings (name, address, units, default margins and rules, electricity price,
paper, probe tolerance, production lines), validated field by field and saved to the library's site.toml."""

from __future__ import annotations

import copy

import streamlit as st

from procplan.ui import adapter, adapter_library, state, widgets

EDIT = "site_edit"
PAPERS = {"a4": "A4", "letter": "US Letter"}
T_UNITS = {"C": "°C", "F": "°F"}
TIME_UNITS = {"min": "minutes", "h": "hours"}


def _start() -> dict:
    ss = st.session_state
    if ss.get(EDIT, {}).get("generation") != state.generation():
        ss[EDIT] = {"generation": state.generation(), "data": adapter_library.site_dict(state.generation())}
    return ss[EDIT]["data"]


def _plant(d: dict, errs: widgets.FieldErrors) -> None:
    c1, c2, c3 = st.columns([2, 3, 1])
    d["plant"] = c1.text_input("Plant name", value=d.get("plant", ""), key=state.key("site.plant"))
    with c1:
        errs.mark("site.plant")
    d["address"] = c2.text_input(
        "Address (on the sheet)", value=d.get("address", ""), key=state.key("site.address")
    )
    if not d["address"]:
        d.pop("address")
    with c2:
        errs.mark("site.address")
    d["document_prefix"] = c3.text_input(
        "Document prefix", value=d.get("document_prefix", "BP"), key=state.key("site.prefix")
    )
    with c3:
        errs.mark("site.document_prefix")


def _units_and_defaults(d: dict, errs: widgets.FieldErrors, lib) -> None:
    units = d.setdefault("units", {})
    defaults = d.setdefault("defaults", {})
    c = st.columns(4)
    units["temperature"] = c[0].radio(
        "Temperatures on the sheet", list(T_UNITS), format_func=T_UNITS.get, horizontal=True,
        index=list(T_UNITS).index(units.get("temperature", "C")), key=state.key("site.tunit"),
    )  # fmt: skip
    units["time"] = c[1].radio(
        "Times on the sheet", list(TIME_UNITS), format_func=TIME_UNITS.get, horizontal=True,
        index=list(TIME_UNITS).index(units.get("time", "min")), key=state.key("site.time"),
    )  # fmt: skip
    defaults["paper"] = c[2].radio(
        "Paper", list(PAPERS), format_func=PAPERS.get, horizontal=True,
        index=list(PAPERS).index(defaults.get("paper", "a4")), key=state.key("site.paper"),
    )  # fmt: skip
    with c[3]:
        tol = widgets.number(
            "Probe tolerance [K]", d.get("probe", {}).get("tolerance_K", 1.0), "site.tol",
            step=0.1, fmt="%.1f", help="Accuracy of the calibrated hand probes: the smallest action-limit tolerance.",
        )  # fmt: skip
        d["probe"] = {"tolerance_K": tol}
        errs.mark("site.probe")
    c = st.columns([1, 1, 2])
    c[2].caption("A new plan starts with this margin on the predicted time, then the fixed margin on top.")
    with c[0]:
        defaults["margin_percent"] = widgets.number(
            "Safety margin for new plans [%]", defaults.get("margin_percent", 20.0), "site.mp", step=5.0, fmt="%.0f"
        )  # fmt: skip
        errs.mark("site.defaults.margin_percent")
    with c[1]:
        defaults["margin_min"] = widgets.number(
            "Fixed margin [min]", defaults.get("margin_min", 0.0), "site.mm", step=1.0, fmt="%.0f"
        )
        errs.mark("site.defaults.margin_min")
    rules = sorted(lib.rules)
    defaults["rules"] = st.multiselect(
        "Rules that apply by default",
        rules,
        default=[r for r in defaults.get("rules", []) if r in rules],
        format_func=lambda r: lib.rules[r].title or r,
        key=state.key("site.rules"),
    )
    errs.mark("site.defaults.rules")


def _energy(d: dict, errs: widgets.FieldErrors) -> None:
    energy = d.get("energy") or {}
    c = st.columns([1, 1, 1, 1])
    on = c[0].checkbox(
        "Electricity price set", value="price_per_kWh" in energy, key=state.key("site.price_on")
    )
    if not on:
        d.pop("energy", None)
        c[1].caption("Without a price, no cost is shown.")
        return
    with c[1]:
        price = widgets.number(
            "Price per kWh", energy.get("price_per_kWh", 0.2), "site.price", step=0.01, fmt="%.3f"
        )
        errs.mark("site.energy.price_per_kWh")
    currency = c[2].text_input(
        "Currency", value=energy.get("currency", ""), key=state.key("site.currency"), max_chars=8
    )
    with c[2]:
        errs.mark("site.energy.currency")
    d["energy"] = {"price_per_kWh": price, "currency": currency.strip()}


def _lines(d: dict, errs: widgets.FieldErrors, lib) -> None:
    st.subheader("Production lines")
    lines = d.setdefault("lines", [])
    machines = sorted(lib.equipment)
    remove = None
    for i, ln in enumerate(lines):
        c = st.columns([2, 6, 1], vertical_alignment="bottom")
        ln["name"] = c[0].text_input(f"Line {i + 1}", value=ln.get("name", ""), key=state.key("site.ln", i))
        desc = c[1].text_input("Description", value=ln.get("description", ""), key=state.key("site.desc", i))
        if desc.strip():
            ln["description"] = desc
        else:
            ln.pop("description", None)
        if c[2].button("✕", key=state.key("site.rm", i), help=f"Remove line {i + 1}"):
            remove = i
        # the machines take the full width, so that every chosen machine's name can be read
        ln["equipment"] = st.multiselect(
            "Machines on it",
            machines,
            default=[e for e in ln.get("equipment", []) if e in machines],
            format_func=lambda e: lib.equipment[e].name,
            key=state.key("site.eq", i),
        )
        errs.mark(f"site.lines[{i}]")
    if st.button("Add a line", key="site.add"):
        lines.append({"name": f"Line {len(lines) + 1}", "equipment": []})
        state.touch()
        st.rerun()
    if remove is not None:
        lines.pop(remove)
        state.touch()
        st.rerun()


def render() -> None:
    st.header("Site")
    st.caption(
        "The plant's settings: what the batch-plan sheet prints in its header, the units it reads, "
        "the defaults of new plans and the electricity price of the cost figures."
    )
    lib = adapter.library(state.generation())
    data = _start()
    errs = widgets.FieldErrors()
    _plant(data, errs)
    _units_and_defaults(data, errs, lib)
    _energy(data, errs)
    _lines(data, errs, lib)
    checked = adapter_library.check_site(copy.deepcopy(data), state.generation())
    rest = errs.show(checked.problems)
    widgets.problems(rest, "Also to correct:")
    c1, c2 = st.columns([1, 3])
    if c1.button("Save the site settings", key="site.save", disabled=not checked.ok, type="primary"):
        out = adapter_library.save_site(copy.deepcopy(data), state.generation())
        if out.ok:
            state.reload_library()
            st.session_state[state.NOTICE] = f"Site settings saved to {out.value}."
            st.rerun()
        widgets.problems(out.problems, "Not saved:")
    if not checked.ok:
        c2.caption("Correct the fields marked in red to save.")
    if c2.button("Discard the changes", key="site.discard"):
        st.session_state.pop(EDIT, None)
        state.touch()
        st.rerun()
