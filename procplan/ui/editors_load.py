"""The batch in its machines on the Process page: the load model (the batch in a loaded machine, or an empty
machine held at its set point), each loaded machine's state at loading beside its thermal description (read
only: what limits the batch), and the packing of the pieces (trays, cases, a stack or a pallet).

The editor writes the plan dict in file units, exactly the keys the library reads (``[load] model``,
``steps[i].loading_medium_C``, the ``[packing]`` table of procplan.files.packing); the plan's parser judges
every field and its problems show under the field they name. Nothing is computed here.
"""

from __future__ import annotations

import pandas as pd
import streamlit as st

from procplan.ui import adapter_load, state, widgets

#: The load models in the planner's words (keys of procplan.model.LOAD_MODELS).
MODEL_LABELS = {
    "loaded": "Batch in a loaded machine: solved with the batch, as far as the plant holds it",
    "set-point": "Empty machine held at its set point: the batch's load is ignored",
}
MODEL_HELP = (
    "A loaded machine solves the medium with the batch: its plant holds the set point while it can, and "
    "otherwise the medium drifts (a chiller's air warms, a bath cools), which lengthens the times. The "
    "empty-machine run holds the set point whatever the batch: for a batch the plant cannot carry it "
    "shortens a cooling time and overstates a lethality (the unsafe side). Machines without a thermal "
    "description always run at their set point."
)
ARRANGEMENT_LABELS = {
    "tray": "a tray",
    "case": "a case",
    "stack": "a stack of cases",
    "pallet": "a pallet of cases",
}
PIECE_FORMS = {
    "count": "a count",
    "layout": "rows along length × width × height",
}
NO_WALL = "none"
OTHER_WALL = "other material (give its conductivity)"
#: A new packing starts from this (the planner corrects it; the library judges it).
NEW_PACKING = {
    "arrangement": "case",
    "case_length_mm": 300,
    "case_width_mm": 200,
    "case_height_mm": 100,
    "pieces_per_case": 1,
    "wall": "corrugated-board",
    "wall_thickness_mm": 3,
}
STASH = "packing_stash"
AIR_FLOW_HELP = (
    "The air (or liquid) speed that reaches the load's faces over the machine's setting, 0.05 to 1. Air "
    "bypasses a dense load through the gaps beside it: measured speeds inside and beside stacks are a quarter "
    "of the setting or less (Praeger et al. 2019, apple store). 1 (no bypass) is the unsafe side: it "
    "shortens the time."
)


def _count(label: str, value, key: str, help: str | None = None) -> int:
    """A whole number the library judges (no limits here, so a zero or negative entry is named by it)."""
    return int(round(widgets.number(label, value, key, step=1.0, fmt="%.0f", help=help)))


def _model(plan: dict) -> str:
    from procplan.run.machine_load import LOAD_MODELS

    load = plan.get("load") if isinstance(plan.get("load"), dict) else {}
    models = list(LOAD_MODELS)
    current = load.get("model", "loaded")
    model = st.radio(
        "Medium temperature during the batch",
        models,
        index=models.index(current) if current in models else 0,
        format_func=MODEL_LABELS.get,
        key=state.key("ld.model"),
        help=MODEL_HELP,
    )
    rest = {k: v for k, v in load.items() if k != "model"}
    if model != "loaded":
        rest["model"] = model
    if rest:
        plan["load"] = rest
    else:
        plan.pop("load", None)
    return model


def thermal_rows(v: adapter_load.MachineThermalView, u) -> list[tuple[str, str]]:
    """The machine's thermal description in words, with the figures that limit the batch."""
    duty = "removes" if v.refrigerating else "supplies"
    rows = [("set point", u.temp(v.set_point_C))]
    if v.refrigerating:
        rows.append(
            (
                "plant capacity",
                f"{v.capacity_kW:.1f} kW rated at {u.temp(v.rated_C)}, evaporating at {u.temp(v.evaporating_C)}",
            )
        )
        rows.append(("plant at the set point", f"{duty} at most {v.available_kW:.1f} kW"))
    else:
        rows.append(("plant capacity", f"{duty} at most {v.capacity_kW:.1f} kW"))
    rows += [
        (
            "heat capacity of the medium",
            f"{v.medium_kJ_K:,.1f} kJ/K ({v.medium_volume_m3:g} m³ of {v.medium})",
        ),
        (
            "heat capacity of the structure",
            f"{v.structure_kJ_K:,.1f} kJ/K ({v.structure_mass_kg:g} kg)",
        ),
        (
            "fixed loads",
            f"{v.fixed_kW:.2f} kW (fans {v.fans_kW:g}, lights {v.lights_kW:g}, defrost {v.defrost_kW:g}, "
            f"doors {v.doors_kW:g} kW)",
        ),
        (
            "walls",
            f"{v.wall_UA_W_K:g} W/K to a room at {u.temp(v.room_C)}: "
            f"{v.walls_kW:+.2f} kW into the medium at the set point",
        ),
    ]
    return rows


def _machine_state(step: dict, i: int, view, loaded: bool, errs: widgets.FieldErrors) -> None:
    """One step in a machine with a thermal description: its data (read only) and the medium at loading."""
    u = state.units()
    with st.container(border=True):
        st.markdown(f"**Step {i + 1}: {step.get('name', '')}** in {view.machine}")
        table = pd.DataFrame(thermal_rows(view, u), columns=["item", "value"]).set_index("item")
        st.table(table)
        c1, c2 = st.columns(2)
        given = c1.checkbox(
            "The medium is not at its set point when the batch goes in",
            value=step.get("loading_medium_C") is not None,
            key=state.key("ld.lm.on", i),
            help="E.g. a chiller whose air is still warm from the last batch, or a bath not yet up to "
            "temperature. Without it the medium starts at its set point.",
        )
        if given:
            with c2:
                from procplan.model import MEDIUM_RANGE_C

                step["loading_medium_C"] = widgets.temperature(
                    "Medium temperature at loading",
                    step.get("loading_medium_C", view.set_point_C),
                    f"ld.lm.{i}",
                    minimum_C=MEDIUM_RANGE_C[0],
                    maximum_C=MEDIUM_RANGE_C[1],
                )
        else:
            step.pop("loading_medium_C", None)
        errs.mark(f"steps[{i}].loading_medium_C")
        if not loaded:
            st.caption("Not used by the empty-machine run: the medium is held at its set point.")


def _machines(plan: dict, lib, loaded: bool, errs: widgets.FieldErrors) -> None:
    plain: list[str] = []
    for i, step in enumerate(plan.get("steps", [])):
        eid = step.get("equipment")
        if not eid:
            step.pop("loading_medium_C", None)  # the library takes it only with a machine
            continue
        if eid not in lib.equipment:
            continue
        out = adapter_load.machine_thermal(eid, step.get("settings") or {}, state.generation())
        if not out.ok:
            continue  # the step's settings are out of range: named under the step
        if out.value is None:
            plain.append(f"step {i + 1} ({lib.equipment[eid].name})")
            continue
        _machine_state(step, i, out.value, loaded, errs)
    if plain:
        st.caption(
            "No thermal description, so the medium is held at its set point whatever the batch (an "
            "empty-machine run): " + "; ".join(plain) + "."
        )


def _pieces(pk: dict, errs: widgets.FieldErrors) -> None:
    forms = list(PIECE_FORMS)
    form = st.radio(
        "Pieces in one case given as",
        forms,
        index=1 if "piece_layout" in pk else 0,
        format_func=PIECE_FORMS.get,
        horizontal=True,
        key=state.key("pk.form"),
    )
    if form == "count":
        layout = pk.pop("piece_layout", None)
        start = pk.get("pieces_per_case") or (layout[0] * layout[1] * layout[2] if layout else 1)
        pk["pieces_per_case"] = _count("Pieces per case (or tray)", start, "pk.ppc")
        errs.mark("packing.pieces_per_case")
    else:
        old = pk.pop("pieces_per_case", None)
        layout = list(pk.get("piece_layout") or [old or 1, 1, 1])
        c = st.columns(3)
        for j, axis in enumerate(("length", "width", "height")):
            with c[j]:
                layout[j] = _count(f"Pieces along the {axis}", layout[j], f"pk.pl.{j}")
        pk["piece_layout"] = layout
        errs.mark("packing.piece_layout")
        errs.mark("packing.pieces_per_case")


def _wall(pk: dict, errs: widgets.FieldErrors) -> None:
    from procplan.properties.packing import WALL_MATERIALS

    options = [*WALL_MATERIALS, OTHER_WALL, NO_WALL]
    if "wall_k_W_mK" in pk:  # a conductivity given wins over a named material (as in the library)
        current = OTHER_WALL
    else:
        current = pk["wall"] if pk.get("wall") in WALL_MATERIALS else NO_WALL
    c = st.columns(3)
    pick = c[0].selectbox(
        "Case wall",
        options,
        index=options.index(current) if current in options else len(options) - 1,
        format_func=lambda w: (
            f"{w.replace('-', ' ')} (k {WALL_MATERIALS[w][0]:g} W/mK)" if w in WALL_MATERIALS else w
        ),
        key=state.key("pk.wall"),
    )
    errs.mark("packing.wall")
    if pick == NO_WALL:
        for k in ("wall", "wall_k_W_mK", "wall_thickness_mm"):
            pk.pop(k, None)
        return
    if pick == OTHER_WALL:
        if current != OTHER_WALL:  # a material just left is not this wall's name (one from the file stays)
            pk.pop("wall", None)
        with c[2]:
            pk["wall_k_W_mK"] = widgets.number(
                "Wall conductivity [W/mK]", pk.get("wall_k_W_mK", 0.05), "pk.wk", step=0.005, fmt="%.3f"
            )
            errs.mark("packing.wall_k_W_mK")
    else:
        pk["wall"] = pick
        pk.pop("wall_k_W_mK", None)
    with c[1]:
        pk["wall_thickness_mm"] = widgets.number(
            "Wall thickness [mm]",
            pk.get("wall_thickness_mm", 3.0),
            "pk.wt",
            step=0.5,
            fmt="%.1f",
            help="Each wall of the case: its layers (board, liner) together.",
        )
        errs.mark("packing.wall_thickness_mm")


def _cases(pk: dict, errs: widgets.FieldErrors) -> None:
    if pk.get("arrangement") not in ("stack", "pallet"):
        pk.pop("cases_layout", None)
        return
    layout = list(pk.get("cases_layout") or [1, 1, 1])
    c = st.columns(3)
    for j, axis in enumerate(("length", "width", "height (layers)")):
        with c[j]:
            layout[j] = _count(f"Cases along the {axis}", layout[j], f"pk.cl.{j}")
    pk["cases_layout"] = layout
    errs.mark("packing.cases_layout")


def _air_and_model(pk: dict, errs: widgets.FieldErrors) -> None:
    from procplan.properties.packing import DEFAULT_PACKED_MODEL, PACKED_MODEL_LABELS

    c = st.columns(3)
    with c[0]:
        pk["air_flow_factor"] = widgets.number(
            "Share of the air speed at the load",
            pk.get("air_flow_factor", 1.0),
            "pk.af",
            step=0.05,
            fmt="%.2f",
            help=AIR_FLOW_HELP,
        )
        errs.mark("packing.air_flow_factor")
    if pk["air_flow_factor"] == 1.0:
        pk.pop("air_flow_factor")
    with c[1]:
        own = st.checkbox(
            "Give the air fraction between the pieces",
            value="void_fraction" in pk,
            key=state.key("pk.vf.on"),
            help="Otherwise it follows from the piece count, the pieces' size and their own packaging.",
        )
        if own:
            pk["void_fraction"] = widgets.number(
                "Air fraction (void fraction)", pk.get("void_fraction", 0.4), "pk.vf", step=0.01, fmt="%.2f"
            )
        else:
            pk.pop("void_fraction", None)
        errs.mark("packing.void_fraction")
    models = list(PACKED_MODEL_LABELS)
    model = c[2].selectbox(
        "Conductivity of pieces and air",
        models,
        index=models.index(pk.get("conductivity_model", DEFAULT_PACKED_MODEL)),
        format_func=PACKED_MODEL_LABELS.get,
        key=state.key("pk.model"),
    )
    if model == DEFAULT_PACKED_MODEL:
        pk.pop("conductivity_model", None)
    else:
        pk["conductivity_model"] = model
    errs.mark("packing.conductivity_model")


def _packing(plan: dict, errs: widgets.FieldErrors) -> None:
    on = st.checkbox(
        "The pieces are packed: trays, cases, a stack or a pallet",
        value=isinstance(plan.get("packing"), dict),
        key=state.key("pk.on"),
        help="The load is then solved as one block of pieces and air beside the single free piece: its "
        "centre cools (or heats) slowest, its corner piece fastest.",
    )
    if not on:
        if isinstance(plan.get("packing"), dict):
            st.session_state[STASH] = plan.pop("packing")
        return
    pk = plan.setdefault("packing", dict(st.session_state.get(STASH) or NEW_PACKING))
    with st.container(border=True):
        arrangements = list(ARRANGEMENT_LABELS)
        c = st.columns(4)
        pk["arrangement"] = c[0].selectbox(
            "Pieces packed in",
            arrangements,
            index=arrangements.index(pk["arrangement"]) if pk.get("arrangement") in arrangements else 1,
            format_func=ARRANGEMENT_LABELS.get,
            key=state.key("pk.arr"),
        )
        unit = "tray" if pk["arrangement"] == "tray" else "case"
        for j, axis in enumerate(("length", "width", "height")):
            with c[j + 1]:
                pk[f"case_{axis}_mm"] = widgets.number(
                    f"Inner {axis} of a {unit} [mm]", pk.get(f"case_{axis}_mm", 100.0), f"pk.d.{j}", step=5.0
                )
                errs.mark(f"packing.case_{axis}_mm")
        errs.mark("packing.arrangement")
        _pieces(pk, errs)
        _wall(pk, errs)
        _cases(pk, errs)
        _air_and_model(pk, errs)


SECOND_HELP = (
    "Another product loaded into the same machine at the same time (e.g. a trolley of hot sauce tubs beside "
    "the batch). It warms the shared medium, which lengthens the batch's time; leaving it out is the unsafe "
    "side. Its temperatures are reported beside the batch; the plan's rules and targets apply to the batch."
)


def _second_target(sp: dict) -> None:
    """The second product's own core target (``target_core_C``): reported beside the batch, never a stop."""
    on = st.checkbox(
        "It has its own core target",
        value=sp.get("target_core_C") is not None,
        key=state.key("ld.sp.tg.on"),
        help="The run reports when its core reaches this temperature and warns when it does not; the steps "
        "still stop on the batch's core.",
    )
    if not on:
        sp.pop("target_core_C", None)
        return
    sp["target_core_C"] = _second_temperature("Its core target", sp.get("target_core_C", 5.0), "ld.sp.tg")


def _second_temperature(label: str, value: float, key: str) -> float:
    """A temperature of the second product, entered within the range the plan file accepts for media."""
    from procplan.model import MEDIUM_RANGE_C

    return widgets.temperature(label, value, key, minimum_C=MEDIUM_RANGE_C[0], maximum_C=MEDIUM_RANGE_C[1])


def _second_product(plan: dict, lib, loaded: bool, errs: widgets.FieldErrors) -> None:
    """``[load.second_product]``: a library product sharing the loaded machines' medium."""
    load = plan.get("load") if isinstance(plan.get("load"), dict) else {}
    sp = load.get("second_product") if isinstance(load.get("second_product"), dict) else None
    on = st.checkbox(
        "A second product shares the machine",
        value=sp is not None,
        key=state.key("ld.sp.on"),
        help=SECOND_HELP,
    )
    if not on:
        if sp is not None:
            load.pop("second_product", None)
            if load:
                plan["load"] = load
            else:
                plan.pop("load", None)
        return
    names = sorted(lib.products)
    sp = dict(sp or {"product": names[0], "pieces": 10, "initial_temperature_C": 20.0})
    c = st.columns(3)
    current = sp.get("product")
    sp["product"] = c[0].selectbox(
        "Second product",
        names,
        index=names.index(current) if current in names else 0,
        format_func=lambda n: f"{n} — {lib.products[n].description}" if lib.products[n].description else n,
        key=state.key("ld.sp.product"),
    )
    with c[1]:
        sp["pieces"] = _count("Its pieces in the batch", sp.get("pieces", 10), "ld.sp.pieces")
    with c[2]:
        sp["initial_temperature_C"] = _second_temperature(
            "Its temperature at loading", sp.get("initial_temperature_C", 20.0), "ld.sp.t0"
        )
    _second_target(sp)
    for f in ("product", "pieces", "initial_temperature_C", "target_core_C"):
        errs.mark(f"load.second_product.{f}")
    errs.mark("load.second_product")
    plan.setdefault("load", {})["second_product"] = sp
    if not loaded:
        st.caption("Not used by the empty-machine run: the medium is held at its set point.")


def editor(plan: dict, lib, errs: widgets.FieldErrors) -> None:
    """The load model, the machines' state at loading, a second product and the packing of the plan dict."""
    st.subheader("The batch in its machines")
    loaded = _model(plan) == "loaded"
    _machines(plan, lib, loaded, errs)
    _second_product(plan, lib, loaded, errs)
    st.markdown("**Packing**")
    _packing(plan, errs)
