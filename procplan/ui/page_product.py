"""Product page: pick a product from the library, edit its shape, size, composition and packaging, see its
property curves, save it as a new library product."""

from __future__ import annotations

import numpy as np
import pandas as pd
import streamlit as st

from procplan.ui import adapter, charts, state, widgets

SHAPE_LABELS = {
    "slab": "slab (thickness)",
    "cylinder": "long cylinder (diameter)",
    "sphere": "sphere (diameter)",
    "finite-cylinder": "short cylinder (diameter × length)",
    "brick": "block (length × width × height)",
}
DIM_LABELS = {
    "thickness_mm": "Thickness",
    "diameter_mm": "Diameter",
    "length_mm": "Length",
    "width_mm": "Width",
    "height_mm": "Height",
}
CATEGORY_LABELS = {
    "meat": "meat, fish, poultry",
    "fruit-vegetable": "fruit and vegetables",
    "juice": "juices",
    "other": "other",
}
SUM_TOLERANCE = 0.005


def _library_picker(lib) -> None:
    st.subheader("Start from a library product")
    c1, c2 = st.columns([1, 2])
    query = c1.text_input("Search products", key="product_search", placeholder="e.g. chicken, tub, vial")
    names = sorted(lib.products)
    q = query.strip().lower()
    matches = [
        n
        for n in names
        if not q
        or q in n.lower()
        or q in lib.products[n].description.lower()
        or q in lib.products[n].category
    ]
    if not matches:
        c2.info(f"No library product matches '{query}'.")
        return
    current = state.plan()["product"].get("library")
    index = matches.index(current) if current in matches else 0
    pick = c2.selectbox(
        f"Library product ({len(matches)} of {len(names)})",
        matches,
        index=index,
        key="product_pick",
        format_func=lambda n: f"{n} — {lib.products[n].description}" if lib.products[n].description else n,
    )
    if st.button("Use this product in the plan", key="use_product", disabled=pick is None):
        state.switch_product(
            adapter.product_dict_of(pick, state.generation()), f"Product '{pick}' loaded from the library."
        )
        st.rerun()


def _shape(prod: dict) -> None:
    from procplan.geometry import SHAPES

    c1, c2 = st.columns(2)
    prod["name"] = c1.text_input("Product name", value=prod.get("name", ""), key=state.key("p.name"))
    shapes = list(SHAPES)
    shape = c2.selectbox(
        "Shape",
        shapes,
        index=shapes.index(prod.get("shape", "slab")) if prod.get("shape") in shapes else 0,
        format_func=lambda s: SHAPE_LABELS.get(s, s),
        key=state.key("p.shape"),
    )
    if shape != prod.get("shape"):
        prod["shape"] = shape
    spec = SHAPES[shape]
    keys = [k[:-2] + "_mm" for k in spec["required"]]
    optional = [k[:-2] + "_mm" for k in spec["optional"]]
    for k in ("thickness_mm", "diameter_mm", "length_mm", "width_mm", "height_mm"):
        if k not in keys and k not in optional:
            prod.pop(k, None)
    cols = st.columns(max(len(keys) + len(optional) + (1 if shape == "slab" else 0), 1))
    for i, k in enumerate(keys):
        with cols[i]:
            prod[k] = widgets.number(
                f"{DIM_LABELS[k]} [mm]",
                prod.get(k, 50.0),
                f"p.{k}",
                minimum=0.1,
                maximum=3000.0,
                step=1.0,
                fmt="%.1f",
            )
    for j, k in enumerate(optional):
        with cols[len(keys) + j]:
            v = widgets.number(
                f"{DIM_LABELS[k]} [mm] (0 = not given)",
                prod.get(k, 0.0),
                f"p.{k}",
                minimum=0.0,
                maximum=3000.0,
                step=1.0,
                fmt="%.1f",
                help="Only used for the piece mass and the energy per batch.",
            )
            if v > 0:
                prod[k] = v
            else:
                prod.pop(k, None)
    if shape == "slab":
        with cols[-1]:
            one = st.checkbox(
                "One face insulated (tray, mould)", value=prod.get("faces", 2) == 1, key=state.key("p.faces")
            )
        if one:
            prod["faces"] = 1
        else:
            prod.pop("faces", None)
    else:
        prod.pop("faces", None)


def _composition(prod: dict) -> None:
    from procplan.properties import COMPONENT_NAMES

    st.subheader("Composition (mass fractions)")
    has_fixed = "fixed_properties" in prod
    mode = st.radio(
        "Properties from",
        ["composition", "measured constants"],
        index=1 if has_fixed else 0,
        horizontal=True,
        key=state.key("p.mode"),
        help="Composition: Choi–Okos component model with freezing. Measured constants: k, ρ, cp you supply.",
    )
    if mode == "composition":
        comp = dict(prod.get("composition") or {})
        if not comp:
            comp = {
                "water": 0.75,
                "protein": 0.18,
                "fat": 0.05,
                "carbohydrate": 0.0,
                "fiber": 0.0,
                "ash": 0.02,
            }
        cols = st.columns(len(COMPONENT_NAMES))
        for col, name in zip(cols, COMPONENT_NAMES, strict=True):
            with col:
                comp[name] = widgets.number(
                    name.capitalize(),
                    comp.get(name, 0.0),
                    f"p.comp.{name}",
                    minimum=0.0,
                    maximum=1.0,
                    step=0.01,
                    fmt="%.3f",
                )
        prod["composition"] = comp
        prod.pop("fixed_properties", None)
        _conductivity_model(prod)
        _ice_model(prod)
        total = sum(comp.values())
        off = total - 1.0
        if abs(off) > SUM_TOLERANCE:
            side = "above" if off > 0 else "below"
            st.error(
                f"Composition does not add up: the mass fractions sum to {total:.3f} "
                f"({abs(off):.3f} {side} 1). They must sum to 1 ± {SUM_TOLERANCE:g}.",
                icon=":material/error:",
            )
        else:
            st.success(f"Composition sum {total:.3f} (1 ± {SUM_TOLERANCE:g}).")
    else:
        fp = dict(prod.get("fixed_properties") or {"k_W_mK": 0.5, "rho_kg_m3": 1050.0, "cp_J_kgK": 3600.0})
        c = st.columns(3)
        with c[0]:
            fp["k_W_mK"] = widgets.number(
                "k [W/mK]", fp.get("k_W_mK", 0.5), "p.fp.k", minimum=0.01, maximum=50.0, step=0.01, fmt="%.3f"
            )
        with c[1]:
            fp["rho_kg_m3"] = widgets.number(
                "ρ [kg/m³]",
                fp.get("rho_kg_m3", 1050.0),
                "p.fp.rho",
                minimum=100.0,
                maximum=5000.0,
                step=10.0,
                fmt="%.0f",
            )
        with c[2]:
            fp["cp_J_kgK"] = widgets.number(
                "cp [J/kgK]",
                fp.get("cp_J_kgK", 3600.0),
                "p.fp.cp",
                minimum=100.0,
                maximum=10000.0,
                step=10.0,
                fmt="%.0f",
            )
        prod["fixed_properties"] = fp
        prod.pop("composition", None)
        extra = {k: v for k, v in fp.items() if k not in ("k_W_mK", "rho_kg_m3", "cp_J_kgK")}
        if extra:
            st.caption("Also from the file (kept): " + ", ".join(f"{k} = {v:g}" for k, v in extra.items()))
    c1, c2 = st.columns(2)
    from procplan.model import FOOD_CATEGORIES

    cats = list(FOOD_CATEGORIES)
    prod["category"] = c1.selectbox(
        "Food group (for the estimated freezing point)",
        cats,
        index=cats.index(prod.get("category", "meat")) if prod.get("category") in cats else 0,
        format_func=lambda c: CATEGORY_LABELS.get(c, c),
        key=state.key("p.category"),
    )
    with c2:
        measured = st.checkbox(
            "Measured initial freezing point",
            value=prod.get("freezing_C") is not None,
            key=state.key("p.tf_on"),
        )
        if measured:
            prod["freezing_C"] = widgets.temperature(
                "Initial freezing point",
                prod.get("freezing_C", -1.0),
                "p.tf",
                minimum_C=-40.0,
                maximum_C=0.0,
                step=0.1,
            )
        else:
            prod.pop("freezing_C", None)


#: The conductivity models of the library (procplan.properties.CONDUCTIVITY_MODELS) in words.
CONDUCTIVITY_LABELS = {
    "parallel": "parallel (highest k: components side by side along the heat flow)",
    "series": "series (lowest k: layers across the heat flow; the slow, safe side)",
    "maxwell-eucken": "Maxwell–Eucken (water continuous, the rest dispersed in it)",
}


def _conductivity_model(prod: dict) -> None:
    from procplan.properties import CONDUCTIVITY_MODELS

    models = list(CONDUCTIVITY_MODELS)
    current = prod.get("conductivity_model", "parallel")
    model = st.selectbox(
        "Conductivity model",
        models,
        index=models.index(current) if current in models else 0,
        format_func=lambda m: CONDUCTIVITY_LABELS.get(m, m),
        key=state.key("p.kmodel"),
        help="How the components' conductivities combine. A lower k lengthens predicted cooling and heating "
        "times and lowers predicted lethality: the series model is the conservative bound.",
    )
    if model == "parallel":
        prod.pop("conductivity_model", None)
    else:
        prod["conductivity_model"] = model


#: The ice-fraction models of the library (procplan.properties.ICE_MODELS) in words.
ICE_LABELS = {
    "chen": "Chen (1985): from the freezing-point depression, with bound water",
    "tchigeov": "Tchigeov (1979): empirical curve, limited to the freezable water",
}


def _ice_model(prod: dict) -> None:
    from procplan.properties import ICE_MODELS

    models = list(ICE_MODELS)
    current = prod.get("ice_model", "chen")
    model = st.selectbox(
        "Ice fraction model",
        models,
        index=models.index(current) if current in models else 0,
        format_func=lambda m: ICE_LABELS.get(m, m),
        key=state.key("p.icemodel"),
        help="How much of the water is ice below the initial freezing point, which sets the latent heat still "
        "to remove at each temperature. The models differ most just below the freezing point: compare both "
        "for a freezing or thawing step.",
    )
    if model == "chen":
        prod.pop("ice_model", None)
    else:
        prod["ice_model"] = model


def _packaging(prod: dict) -> None:
    st.subheader("Packaging layers")
    layers = [dict(x) for x in prod.get("packaging", [])]
    if not layers:
        st.caption("No packaging: the product surface meets the medium directly.")
    remove = None
    for i, layer in enumerate(layers):
        c = st.columns([3, 2, 2, 2, 1], vertical_alignment="bottom")
        layer["name"] = c[0].text_input(
            f"Layer {i + 1}", value=layer.get("name", ""), key=state.key("p.pk.name", i)
        )
        air = c[3].checkbox("Air gap", value=bool(layer.get("air_gap")), key=state.key("p.pk.air", i))
        with c[1]:
            layer["thickness_mm"] = widgets.number(
                "Thickness [mm]",
                layer.get("thickness_mm", 0.1),
                f"p.pk.t.{i}",
                minimum=0.001,
                maximum=100.0,
                step=0.05,
                fmt="%.3f",
            )
        with c[2]:
            if air:
                st.caption("Still air")
                layer.pop("k_W_mK", None)
                layer["air_gap"] = True
            else:
                layer["k_W_mK"] = widgets.number(
                    "k [W/mK]",
                    layer.get("k_W_mK", 0.2),
                    f"p.pk.k.{i}",
                    minimum=0.001,
                    maximum=500.0,
                    step=0.01,
                    fmt="%.3f",
                )
                layer.pop("air_gap", None)
        if c[4].button("✕", key=state.key("p.pk.rm", i), help=f"Remove layer {i + 1}"):
            remove = i
    added = st.button("Add a packaging layer", key=state.key("p.pk.add"))
    if added:
        layers.append({"name": f"layer {len(layers) + 1}", "thickness_mm": 0.1, "k_W_mK": 0.2})
    if remove is not None:
        layers.pop(remove)
    if layers:
        prod["packaging"] = layers
        prod.pop("unwrapped", None)
    else:
        prod.pop("packaging", None)
    if added or remove is not None:
        state.touch()
        st.rerun()


def _emissivity(prod: dict) -> None:
    """The product's (or its outer packaging's) emissivity; without it an air machine's own setting applies."""
    own = st.checkbox(
        "State the surface emissivity of the product or its packaging",
        value=prod.get("emissivity") is not None,
        key=state.key("p.eps.on"),
        help="Radiation to the machine's walls in air machines. Without it the machine's emissivity setting "
        "applies; a step that sets the machine's emissivity itself still wins. Bright foil radiates far less "
        "than a moist food surface or paper: too high a value speeds up predicted cooling and heating.",
    )
    if own:
        # no limits here: a value outside 0-1 is named by the plan at its field
        prod["emissivity"] = widgets.number(
            "Surface emissivity", prod.get("emissivity", 0.9), "p.eps", step=0.05, fmt="%.2f"
        )
    else:
        prod.pop("emissivity", None)


def property_table(frame, freezing_C, u) -> pd.DataFrame:
    """The property curves every 5 K (and at the initial freezing point), in the display units."""
    t = frame["temperature_C"].to_numpy()
    wanted = np.unique(
        np.r_[np.arange(-40.0, 100.01, 5.0), [] if freezing_C is None else [round(freezing_C, 2)]]
    )
    rows = frame.iloc[[int(np.argmin(np.abs(t - w))) for w in wanted]]
    out = pd.DataFrame(
        {
            f"temperature [{u.temperature}]": np.round(u.t(rows["temperature_C"].to_numpy()), 2),
            "k [W/mK]": rows["k_W_mK"].round(3).to_numpy(),
            "density [kg/m³]": rows["rho_kg_m3"].round(1).to_numpy(),
            "apparent cp [kJ/kgK]": (rows["apparent_cp_J_kgK"] / 1000.0).round(3).to_numpy(),
            "enthalpy [kJ/kg]": (rows["enthalpy_J_kg"] / 1000.0).round(2).to_numpy(),
            "ice fraction [kg/kg]": rows["ice_fraction"].round(3).to_numpy(),
        }
    )
    return out.drop_duplicates(subset=out.columns[0])


def _curves(prod: dict) -> None:
    st.subheader("Properties against temperature")
    u = state.units()
    text = adapter.plan_toml(prod)
    out = adapter.property_curves(text)
    if not out.ok:
        widgets.problems(out.problems, "The property curves need a valid product:")
        return
    frame = out.value["frame"]
    tf = out.value["initial_freezing_C"]
    try:
        mass = adapter.piece_mass_kg(adapter.product_from_plan_dict(prod))
        st.caption(
            f"Initial freezing point {u.temp(tf) if tf is not None else 'none in range'} · "
            f"mass of one piece {mass:.3f} kg"
        )
    except Exception:  # noqa: BLE001 - the curves above already validated the product
        pass
    ranges = {"whole": f"whole range ({u.temp(-40.0, 0)} to {u.temp(100.0, 0)})"}
    if tf is not None:
        ranges["freezing"] = f"freezing range ({u.temp(tf - 20.0, 0)} to {u.temp(tf + 5.0, 0)})"
    shown = st.radio(
        "Temperatures shown", list(ranges), format_func=ranges.get, horizontal=True, key="p.range"
    )
    x_range = (tf - 20.0, tf + 5.0) if shown == "freezing" and tf is not None else None
    charts.show(charts.property_figure(frame, tf, u, x_range), "property_chart", "properties")
    with st.expander("Property table"):
        table = property_table(frame, tf, u)
        st.dataframe(table, hide_index=True, width="stretch")
        st.download_button(
            "Download the property table (CSV)",
            table.to_csv(index=False).encode("utf-8"),
            file_name=f"{prod.get('name', 'product')}-properties.csv",
            mime="text/csv",
            key="p.props_csv",
        )


def _save(prod: dict) -> None:
    st.subheader("Save as a library product")
    c1, c2, c3 = st.columns([2, 2, 1])
    default = prod.get("name", "new-product")
    name = c1.text_input(
        "Save under the name",
        value=default,
        key=state.key("p.save_name"),
        help="Lower-case letters, digits, '.', '_' or '-'.",
    ).strip()
    lib = adapter.library(state.generation())
    exists = name in lib.products
    overwrite = c2.checkbox(
        "Replace the existing product of this name", value=False, key="p.save_overwrite", disabled=not exists
    )
    if exists and not overwrite:
        c2.caption(f"'{name}' is already in the library; it will not be replaced unless you tick the box.")
    if c3.button("Save product", key="p.save"):
        out = adapter.save_product(prod, name, overwrite=overwrite and exists)
        if out.ok:
            state.reload_library()
            st.session_state[state.NOTICE] = f"Saved product '{name}' to {out.value}."
            st.rerun()
        else:
            widgets.problems(out.problems, "The product was not saved:")


def render() -> None:
    st.header("Product")
    top = st.container()
    lib = adapter.library(state.generation())
    _library_picker(lib)
    st.divider()
    prod = state.plan()["product"]
    if prod.get("library"):
        st.caption(
            f"Based on library product '{prod['library']}'; your changes stay in this plan until you save."
        )
    _shape(prod)
    _composition(prod)
    _packaging(prod)
    _emissivity(prod)
    _curves(prod)
    _save(prod)
    _, parsed = state.current()
    if not parsed.ok:
        with top:
            widgets.problems(parsed.problems, "The plan has invalid input (details below):")
