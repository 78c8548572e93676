"""Editors of a step's mass transfer: brining, dry curing or salt equalisation (the step's ``brine`` table),
and what a step in hot dry air does to an unwrapped product's water.

They edit the plan dict in file units (percent, m²/s, m/s); the plan's parser (procplan.files.brine) judges
the edit, and its problems are shown under the fields they name. The brine temperature is the step's medium.
"""

from __future__ import annotations

import streamlit as st

from procplan.ui import adapter_mass, state, widgets

BRINING = "Brining or curing in this step (salt or sugar taken up)"
MODES = {
    "brine": "in a brine or syrup",
    "dry_cure": "dry cure (salt rubbed on)",
    "equalise": "equalisation (no exchange at the surface)",
}
SOLUTES = {"salt": "salt", "sugar": "sugar"}
MEASURED = "(a measured value for this product)"
STOPS = {
    "core": "the core reaches a content",
    "mean": "the mean reaches a content",
    "time": "the step time ends",
}
KM_FORMS = ("from the brine flow (heat–mass analogy)", "a measured value")
#: The keys a registry pick or a given value replace.
D_KEYS = ("diffusivity", "D_m2_s", "reference_C", "activation_kJ_mol")


def step(step: dict, i: int, plan: dict, lib, errs: widgets.FieldErrors) -> None:
    """The mass-transfer editors of one step: brining for any step, drying notes for a step in dry air."""
    brining(step, i, lib, errs)
    drying(step, plan, lib)


def _medium_C(step: dict, lib) -> float | None:
    """The brine temperature: the step's constant medium, or its machine's temperature setting (the machine's
    usual setting when the plan leaves it implicit); None for a medium profile."""
    if step.get("medium_C") is not None:
        return float(step["medium_C"])
    eq = lib.equipment.get(step.get("equipment") or "")
    if eq is None:
        return None
    settings = dict(step.get("settings") or {})
    key = eq.temperature_key
    if key in settings:
        return float(settings[key])
    return float(eq.settings[key].default) if key in eq.settings else None


def _mode(brine: dict, i: int) -> str:
    modes = list(MODES)
    current = "dry_cure" if brine.get("dry_cure") else "equalise" if brine.get("equalise") else "brine"
    mode = st.radio(
        "Surface", modes, index=modes.index(current), format_func=MODES.get, horizontal=True,
        key=state.key("s.br.mode", i),
    )  # fmt: skip
    for k in ("dry_cure", "equalise"):
        brine.pop(k, None)
    if mode != "brine":
        brine.pop("brine_percent", None)
        brine[mode] = True
    return mode


def _concentration(brine: dict, i: int, mode: str, errs: widgets.FieldErrors) -> None:
    solute = brine.get("solute", "salt")
    if mode == "brine":
        top = adapter_mass.max_brine_percent(solute)
        brine["brine_percent"] = widgets.number(
            f"Brine concentration [% {SOLUTES.get(solute, solute)}]",
            brine.get("brine_percent", 10.0),
            f"s.br.pct.{i}",
            minimum=0.0,
            maximum=100.0,
            step=0.5,
            fmt="%.2f",
            help=f"Mass of {solute} in 100 kg of brine; the plan accepts 0.1 to {top:g} %.",
        )
        errs.mark(f"steps[{i}].brine.brine_percent")
    brine["initial_percent"] = widgets.number(
        f"{SOLUTES.get(solute, solute).capitalize()} in the product at the start [%]",
        brine.get("initial_percent", 0.0),
        f"s.br.init.{i}",
        minimum=0.0,
        maximum=100.0,
        step=0.05,
        fmt="%.2f",
    )
    errs.mark(f"steps[{i}].brine.initial_percent")


def _diffusivity(brine: dict, i: int, temperature_C: float | None, errs: widgets.FieldErrors) -> None:
    records = {r.key: r for r in adapter_mass.diffusivities(brine.get("solute", "salt"))}
    u = state.units()
    options = [*records, MEASURED]
    current = brine.get("diffusivity") if brine.get("diffusivity") in records else MEASURED
    if "diffusivity" not in brine and "D_m2_s" not in brine and records:
        current = next(iter(records))
    pick = st.selectbox(
        "Diffusivity of the solute in the product",
        options,
        index=options.index(current),
        format_func=lambda k: k if k == MEASURED else f"{records[k].product} ({u.temp(records[k].low_C, 0)} to {u.temp(records[k].high_C, 0)})",
        key=state.key("s.br.d", i),
    )  # fmt: skip
    if pick == MEASURED:
        brine.pop("diffusivity", None)
        brine["D_m2_s"] = widgets.number(
            "Diffusivity D [m²/s]", brine.get("D_m2_s", 2e-10), f"s.br.dval.{i}", step=1e-11, fmt="%.3e",
            help="Effective diffusivity measured for this product at the brine temperature.",
        )  # fmt: skip
        errs.mark(f"steps[{i}].brine.D_m2_s")
        _arrhenius(brine, i, errs)
        return
    for k in D_KEYS:
        brine.pop(k, None)
    brine["diffusivity"] = pick
    rec = records[pick]
    d = None if temperature_C is None else adapter_mass.diffusivity_at(pick, temperature_C)
    st.caption(
        f"Source: {rec.source}. Valid from {u.temp(rec.low_C, 0)} to {u.temp(rec.high_C, 0)}"
        + (" (Arrhenius fit of the published values)" if rec.temperature_dependent else " (a single published value)")
        + f"; measured under: {rec.conditions}."
    )  # fmt: skip
    if d is not None:
        st.caption(f"D at the brine temperature {u.temp(temperature_C)}: {d:.3g} m²/s.")
    elif temperature_C is not None:
        st.warning(
            f"The brine at {u.temp(temperature_C)} is outside this record's range ({u.temp(rec.low_C, 0)} to "
            f"{u.temp(rec.high_C, 0)}): "
            "choose another record or give a measured value for this temperature.",
            icon=":material/error:",
        )
    errs.mark(f"steps[{i}].brine.diffusivity")


def _arrhenius(brine: dict, i: int, errs: widgets.FieldErrors) -> None:
    """A measured diffusivity's temperature dependence: the temperature it was measured at and an activation
    energy (Arrhenius); without them the value holds at any brine temperature."""
    on = st.checkbox(
        "The diffusivity changes with temperature (Arrhenius)",
        value="reference_C" in brine or "activation_kJ_mol" in brine,
        key=state.key("s.br.arr", i),
        help="Without it the measured value is used at any brine temperature: in a brine colder than the "
        "measurement the salt then goes in too fast here, and the times to a salt content come out short.",
    )
    if not on:
        brine.pop("reference_C", None)
        brine.pop("activation_kJ_mol", None)
        return
    # a file with the temperature alone keeps it so (no activation energy written) until one is typed
    alone = "reference_C" in brine and "activation_kJ_mol" not in brine
    c = st.columns(2)
    with c[0]:
        brine["reference_C"] = widgets.temperature(
            "Temperature the diffusivity was measured at", brine.get("reference_C", 5.0), f"s.br.dref.{i}"
        )
    errs.mark(f"steps[{i}].brine.reference_C")
    # the starting value is the mean of the library's fitted records (none is a measurement of this product)
    known = adapter_mass.published_activations(str(brine.get("solute", "salt")))
    start = round(sum(v for _, v in known) / len(known), 1) if known else 0.0
    listed = "; ".join(f"{p} {v:.0f} kJ/mol" for p, v in known)
    with c[1]:
        ea = widgets.number(
            "Activation energy [kJ/mol]", brine.get("activation_kJ_mol", 0.0 if alone else start), f"s.br.ea.{i}",
            minimum=0.0, step=1.0, fmt="%.1f",
            help="How fast the diffusivity rises with temperature; the plan accepts 0 to 150 kJ/mol. "
            + (f"The library's records give: {listed} (fitted to their published values); the starting "
               "value is their mean. Use your product's own value where it is known." if known else ""),
        )  # fmt: skip
    if not (alone and ea == 0.0):
        brine["activation_kJ_mol"] = ea
    errs.mark(f"steps[{i}].brine.activation_kJ_mol")


def _partition(brine: dict, i: int, errs: widgets.FieldErrors) -> None:
    """The partition coefficient of the solute between the product's water and the brine (1 unless given)."""
    value = widgets.number(
        "Partition coefficient (product water to brine)", brine.get("partition", 1.0), f"s.br.part.{i}",
        minimum=0.0, step=0.05, fmt="%.2f",
        help="Solute in the product's water over solute in the brine at equilibrium; below 1 for a fatty "
        "product. The plan accepts 0.05 to 2.",
    )  # fmt: skip
    if value != 1.0 or "partition" in brine:
        brine["partition"] = value
    errs.mark(f"steps[{i}].brine.partition")


def _surface(brine: dict, i: int, mode: str, errs: widgets.FieldErrors) -> None:
    if mode == "equalise":
        brine.pop("k_m_m_s", None)
        return
    _partition(brine, i, errs)
    form = st.radio(
        "Surface mass-transfer coefficient",
        KM_FORMS,
        index=1 if brine.get("k_m_m_s") is not None else 0,
        horizontal=True,
        key=state.key("s.br.kmf", i),
        help="From the brine flow the library uses the heat–mass analogy of the step's surface coefficient "
        "(a dry cure holds the surface at a saturated solution).",
    )
    if form == KM_FORMS[0]:
        brine.pop("k_m_m_s", None)
        return
    brine["k_m_m_s"] = widgets.number(
        "Surface mass-transfer coefficient [m/s]", brine.get("k_m_m_s", 1e-6), f"s.br.km.{i}",
        step=1e-7, fmt="%.3e",
    )  # fmt: skip
    errs.mark(f"steps[{i}].brine.k_m_m_s")


def _percent_input(brine: dict, key: str, label: str, wkey: str, default: float) -> None:
    brine[key] = widgets.number(label, brine.get(key, default), wkey, minimum=0.0, maximum=100.0, step=0.1, fmt="%.2f")  # fmt: skip


def _targets(brine: dict, i: int, errs: widgets.FieldErrors) -> None:
    word = SOLUTES.get(brine.get("solute", "salt"), "salt")
    stops = list(STOPS)
    current = (
        "core"
        if "stop_when_core_percent" in brine
        else "mean"
        if "stop_when_mean_percent" in brine
        else "time"
    )
    c = st.columns([2, 1])
    stop = c[0].radio(
        "The step ends when", stops, index=stops.index(current), format_func=STOPS.get, horizontal=True,
        key=state.key("s.br.stop", i),
    )  # fmt: skip
    for k in ("core", "mean"):
        if k != stop:
            brine.pop(f"stop_when_{k}_percent", None)
    if stop != "time":
        with c[1]:
            _percent_input(brine, f"stop_when_{stop}_percent", f"{stop.capitalize()} {word} to stop at [%]",
                           f"s.br.stopv.{i}", 1.5)  # fmt: skip
        errs.mark(f"steps[{i}].brine.stop_when_{stop}_percent")
    c = st.columns(2)
    for j, point in enumerate(("core", "mean")):
        key = f"target_{point}_percent"
        with c[j]:
            on = st.checkbox(f"Report when the {point} reaches a {word} content", value=key in brine,
                             key=state.key("s.br.tgon", i, point))  # fmt: skip
            if on:
                _percent_input(
                    brine, key, f"{point.capitalize()} {word} target [%]", f"s.br.tg.{i}.{point}", 2.0
                )
            else:
                brine.pop(key, None)
        errs.mark(f"steps[{i}].brine.{key}")


def brining(step: dict, i: int, lib, errs: widgets.FieldErrors) -> None:
    """The step's brine table: solute, surface (brine, dry cure, equalisation), concentration, diffusivity
    (registry or measured), surface coefficient and the stop or targets on the solute content."""
    on = st.checkbox(BRINING, value=isinstance(step.get("brine"), dict), key=state.key("s.br.on", i))
    if not on:
        step.pop("brine", None)
        return
    brine = dict(step.get("brine") or {"solute": "salt", "brine_percent": 10.0, "initial_percent": 0.0})
    temperature_C = _medium_C(step, lib)
    with st.container(border=True):
        c = st.columns([1, 3])
        solutes = list(SOLUTES)
        brine["solute"] = c[0].selectbox(
            "Solute", solutes, index=solutes.index(brine.get("solute", "salt")) if brine.get("solute", "salt") in solutes else 0,
            key=state.key("s.br.sol", i),
        )  # fmt: skip
        with c[1]:
            mode = _mode(brine, i)
        errs.mark(f"steps[{i}].brine.dry_cure")
        st.caption(
            "Brine temperature: "
            + ("not set (give the step a medium temperature)" if temperature_C is None else f"{state.units().temp(temperature_C)}")
            + " — the step's medium temperature above; the diffusivity is taken at it."
        )  # fmt: skip
        c = st.columns(2)
        with c[0]:
            _concentration(brine, i, mode, errs)
        with c[1]:
            _surface(brine, i, mode, errs)
        _diffusivity(brine, i, temperature_C, errs)
        _targets(brine, i, errs)
        errs.mark(f"steps[{i}].brine")
    step["brine"] = brine


def drying(step: dict, plan: dict, lib) -> None:
    """What a step in an air machine does to an unwrapped product's water (the inputs are the machine's
    settings above: air temperature, speed and dew point)."""
    eq = lib.equipment.get(step.get("equipment") or "")
    if eq is None or eq.medium != "air" or "dew_point_C" not in eq.settings:
        return
    product = plan.get("product", {})
    if product.get("library") and product.get("unwrapped") is None:
        product = {**product, "unwrapped": getattr(lib.products.get(product["library"]), "unwrapped", False)}
    settings = {k: r.default for k, r in eq.settings.items()} | dict(step.get("settings") or {})
    if not adapter_mass.dry_air_applies(product, eq):
        st.caption(
            "Drying in hot dry air: not modelled for this product (it is wrapped); mark it unwrapped on the "
            "Product page to carry its surface evaporation and weight loss."
        )
        return
    w = adapter_mass.humidity_ratio_g_kg(float(settings["dew_point_C"]))
    u = state.units()
    st.info(
        "Drying in hot dry air: the product is unwrapped, so heat and moisture run together (the wet surface "
        f"near the wet-bulb temperature, then a crust, and the weight lost). Oven air {u.temp(settings[eq.temperature_key])} "
        f"at {settings.get('air_speed_m_s', 0):g} m/s with a dew point of {u.temp(settings['dew_point_C'])}"
        + (f" ({w:.0f} g water per kg of dry air)" if w is not None else "")
        + ". Drip and fat running out are not modelled, so cook losses come out low.",
        icon=":material/water_drop:",
    )
