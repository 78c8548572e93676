"""The one door from the browser app to the library: cached calls on hashable inputs (plan TOML text).

Pages never call the engine, the property models or the file functions directly; they call these.
Everything here returns either a value or an :class:`Outcome` holding the InvalidInputError, so that a
page can show the field and the allowed range instead of a traceback.

Caching: results of pure functions that pickle (validation messages, property curves, TOML, CSV, PDF
bytes) use ``st.cache_data``; the library and engine results, which hold machine records and callables
that do not pickle, use ``st.cache_resource`` keyed on the same hashable text and are treated as
read-only by every page.
"""

from __future__ import annotations

import importlib
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import streamlit as st

from procplan.errors import InvalidInputError, ValidationErrors
from procplan.files.library import LIBRARY_ENV  # the library folder the app opens (default: the demo)

DEMO_PLAN = "roulade-blast-chill"


@dataclass(frozen=True)
class Problem:
    """One invalid-input message, ready to show next to its field."""

    field: str
    value: Any
    allowed: str
    detail: str | None

    def message(self) -> str:
        """The problem in plain words, the file key after it for whoever edits the file."""
        from procplan.ui.fmt import plain_field

        value = "missing" if self.value in ("", None) else f"{self.value!r} is not allowed"
        text = f"**{plain_field(self.field)}**: {value}; allowed {self.allowed}"
        text += f" ({self.detail})" if self.detail else ""
        return text + f" · in the file: `{self.field}`"


def problems_of(exc: InvalidInputError) -> tuple[Problem, ...]:
    """The field-level problems inside an InvalidInputError (several for a ValidationErrors)."""
    items = exc.problems if isinstance(exc, ValidationErrors) else [exc]
    out = []
    for p in items:
        value = p.value
        if isinstance(value, float):
            value = round(value, 6)
        elif not isinstance(value, (int, str, type(None))):
            value = str(value)
        out.append(Problem(str(p.field), value, str(p.allowed), p.detail))
    return tuple(out)


@dataclass(frozen=True)
class Outcome:
    """A value, or the problems that prevented it."""

    value: Any = None
    problems: tuple[Problem, ...] = ()

    @property
    def ok(self) -> bool:
        return not self.problems


def library_root() -> str:
    """The library folder the app works on."""
    from procplan.files.library import DEMO_LIBRARY

    return str(Path(os.environ.get(LIBRARY_ENV) or DEMO_LIBRARY).resolve())


@st.cache_resource(show_spinner="Loading the product library…")
def _library(root: str, generation: int):
    from procplan.files.library import load_library

    return load_library(root)


#: Library generation of this server process, raised by every save (shared by all sessions).
_SAVED_GENERATION = [0]


def saved_generation() -> int:
    return _SAVED_GENERATION[0]


def library_saved(generation: int) -> int:
    """Record that the library folder changed; returns the new generation for every session."""
    _SAVED_GENERATION[0] = max(_SAVED_GENERATION[0], generation) + 1
    return _SAVED_GENERATION[0]


def library(generation: int = 0):
    """The loaded library (bump ``generation`` after a save to reload)."""
    return _library(library_root(), generation)


# --- plans --------------------------------------------------------------------------------------------


def demo_plan_dict(generation: int = 0) -> dict:
    """The demo plan as a plan dict (file units) with its product written in full."""
    from procplan.files.plan import plan_to_dict

    return plan_to_dict(library(generation).plan(DEMO_PLAN))


def library_plan_dict(name: str, generation: int = 0) -> dict:
    from procplan.files.plan import plan_to_dict

    return plan_to_dict(library(generation).plan(name))


def plan_toml(plan_dict: dict) -> str:
    """Canonical TOML text of a plan dict: the hashable key of every cached call."""
    from procplan.files.tomlfile import dump_toml

    return dump_toml(plan_dict)


@st.cache_resource(max_entries=64, show_spinner=False)
def _parse(text: str, root: str, generation: int) -> Outcome:
    from procplan.files.plan import plan_from_toml

    try:
        return Outcome(plan_from_toml(text, source="current plan", library=_library(root, generation)))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def parse_plan(text: str, generation: int = 0) -> Outcome:
    """Validate plan TOML text: Outcome(value=Plan) or the problems, each naming its field."""
    return _parse(text, library_root(), generation)


def canonical_toml(plan) -> str:
    """The plan written back by the library: equal plans give equal text (6 and 6.0, defaults), so a
    widget round trip that changes nothing does not start a new calculation."""
    from procplan.files.plan import plan_to_toml

    return plan_to_toml(plan)


def read_uploaded_plan(text: str, source: str, generation: int = 0) -> Outcome:
    """Validate an uploaded or pasted plan; on success the value is the plan dict in file units."""
    from procplan.files.plan import plan_from_toml, plan_to_dict

    try:
        plan = plan_from_toml(text, source=source, library=library(generation))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))
    return Outcome(plan_to_dict(plan))


@st.cache_resource(max_entries=48, show_spinner="Calculating…")
def _run(text: str, root: str, generation: int) -> Outcome:
    from procplan.run.engine import run_plan

    parsed = _parse(text, root, generation)
    if not parsed.ok:
        return parsed
    try:
        return Outcome(run_plan(parsed.value, library=_library(root, generation)))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def run(text: str, generation: int = 0) -> Outcome:
    """Run a plan given as TOML text: Outcome(value=PlanResult) or the problems (cached)."""
    return _run(text, library_root(), generation)


# --- products -----------------------------------------------------------------------------------------


def product_from_plan_dict(product_dict: dict):
    """Build a Product from the plan's [product] table (InvalidInputError on bad input)."""
    from procplan.files.product import product_from_dict

    data = dict(product_dict)
    data.pop("library", None)
    return product_from_dict(data, "product")


def product_dict_of(name: str, generation: int = 0) -> dict:
    """A library product as a plan [product] table (file units), remembering where it came from."""
    from procplan.files.product import product_to_dict

    d = product_to_dict(library(generation).products[name])
    d["library"] = name
    return d


@st.cache_data(max_entries=64, show_spinner=False)
def property_curves(product_toml: str, low_C: float = -40.0, high_C: float = 100.0) -> Outcome:
    """k, rho, apparent cp, enthalpy (zero at −40 °C) and ice fraction against temperature for a product's
    [product] table.

    Composition products use :func:`procplan.properties.food_properties`; products with measured
    properties use their property table (no ice fraction then).
    """
    from procplan.files.product import product_from_dict
    from procplan.files.tomlfile import parse_toml
    from procplan.properties import food_properties

    data = parse_toml(product_toml, "product")
    data.pop("library", None)
    try:
        product = product_from_dict(data, "product")
        t = np.linspace(low_C, high_C, 561)
        if product.composition:
            fp = food_properties(
                product.composition_dict,
                t,
                freezing_C=product.freezing_C,
                conductivity_model=product.conductivity_model,
                ice_model=product.ice_model,
                category=product.category,
                porosity=product.porosity,
            )
            frame = pd.DataFrame(
                {
                    "temperature_C": t,
                    "k_W_mK": fp.k_W_mK,
                    "rho_kg_m3": fp.rho_kg_m3,
                    "apparent_cp_J_kgK": fp.apparent_cp_J_kgK,
                    "enthalpy_J_kg": fp.enthalpy_J_kg,
                    "ice_fraction": fp.ice_fraction,
                }
            )
            freezing = fp.initial_freezing_C
        else:
            table = product.property_table()
            frame = pd.DataFrame(
                {
                    "temperature_C": t,
                    "k_W_mK": table.conductivity(t),
                    "rho_kg_m3": table.density(t),
                    "apparent_cp_J_kgK": table.apparent_cp(t),
                    "enthalpy_J_kg": table.enthalpy(t),
                    "ice_fraction": np.full_like(t, np.nan),
                }
            )
            freezing = table.initial_freezing_C
        return Outcome({"frame": frame, "initial_freezing_C": freezing, "mass_kg": None})
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def piece_mass_kg(product) -> float:
    """Mass of one piece [kg] from the product's property table and volume."""
    return float(product.property_table().mass_density_kg_m3 * product.geometry.volume_m3)


def save_product(product_dict: dict, name: str, overwrite: bool) -> Outcome:
    """Save the edited product under ``name`` in the library folder; refuses to replace unless ``overwrite``.

    Outcome(value=path) or the problems (an existing name is reported as a problem of ``product.name``).
    """
    from dataclasses import replace

    from procplan.files import library as libmod
    from procplan.files.tomlfile import check_name

    try:
        check_name("product.name", name)
        product = replace(product_from_plan_dict(product_dict), name=name, library=None)
        root = library_root()
        target = Path(root) / "products" / f"{name}.toml"
        if target.exists() and not overwrite:
            raise InvalidInputError(
                "product.name",
                name,
                "a name not yet in the library, or tick 'replace the existing product'",
                "a product of this name is already saved",
            )
        path = libmod.save_product(root, product, overwrite=overwrite)
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))
    except OSError as exc:
        return Outcome(problems=(Problem("library folder", library_root(), "a writable folder", str(exc)),))
    return Outcome(str(path))


# --- outputs ------------------------------------------------------------------------------------------


@st.cache_data(max_entries=32, show_spinner=False)
def history_csv(text: str, generation: int = 0, temperature_unit: str = "C", time_unit: str = "min") -> bytes:
    """The history of a plan's run as CSV in the display units the user chose, the unit in every header
    (time_s is kept beside the chosen time column; heat flow stays in W)."""
    from procplan.units import c_to_f

    out = run(text, generation)
    if not out.ok:
        return b""
    h = out.value.history.copy()
    h.insert(1, f"time_{time_unit}", h["time_s"] / (3600.0 if time_unit == "h" else 60.0))
    if temperature_unit == "F":
        renamed = {c: c[:-2] + "_F" for c in h.columns if c.endswith("_C")}
        for c in renamed:
            h[c] = c_to_f(h[c].to_numpy())
        h = h.rename(columns=renamed)
    return h.to_csv(index=False).encode("utf-8")


def site_settings(generation: int = 0) -> Outcome:
    """The site settings (plant, lines, display units, paper) of the library folder, or the default site."""
    import procplan.files.site as site_mod

    site_file = Path(library_root()) / "site.toml"
    try:
        return Outcome(
            site_mod.load_site(site_file if site_file.exists() else None, library=library(generation))
        )
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


@st.cache_data(max_entries=16, show_spinner="Preparing the batch-plan sheet…")
def sheet_pdf(
    text: str,
    generation: int = 0,
    *,
    lot_id: str = "",
    revision: str = "A",
    paper: str | None = None,
    prepared_by: str = "",
    temperature_unit: str | None = None,
    time_unit: str | None = None,
) -> Outcome:
    """The batch-plan sheet (PDF bytes) of a plan given as TOML text, with the site settings and, when given,
    the display units the user chose in the app ("C"/"F", "min"/"h") instead of the site's."""
    import dataclasses

    import procplan.output.sheet as mod

    out = run(text, generation)
    if not out.ok:
        return out
    site = site_settings(generation)
    if not site.ok:
        return site
    kwargs = {"lot_id": lot_id, "revision": revision, "prepared_by": prepared_by}
    if paper:
        kwargs["paper"] = paper
    try:
        chosen = {
            k: v
            for k, v in (("temperature_unit", temperature_unit), ("time_unit", time_unit))
            if v is not None
        }
        settings = dataclasses.replace(site.value, **chosen)
        return Outcome(bytes(mod.batch_sheet_pdf(out.value, site=settings, **kwargs)))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


# --- studies ------------------------------------------------------------------------------------------


def studies_module(name: str):
    """A module of procplan.studies (compare, inverse, variability, logger, calibrate, sweep)."""
    return importlib.import_module(f"procplan.studies.{name}")


@st.cache_resource(max_entries=16, show_spinner="Running the scenarios…")
def _compare(
    texts: tuple[str, ...], names: tuple[str, ...], criterion: str, root: str, generation: int
) -> Outcome:
    mod = studies_module("compare")
    plans = []
    for text in texts:
        parsed = _parse(text, root, generation)
        if not parsed.ok:
            return parsed
        plans.append(parsed.value)
    try:
        return Outcome(
            mod.compare_plans(
                plans, library=_library(root, generation), names=list(names), criterion=criterion
            )
        )
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def compare(
    texts: tuple[str, ...], names: tuple[str, ...], criterion: str = "time", generation: int = 0
) -> Outcome:
    """Scenarios side by side (procplan.studies.compare.compare_plans), cached on the plans' text."""
    return _compare(tuple(texts), tuple(names), criterion, library_root(), generation)


@st.cache_resource(max_entries=16, show_spinner="Searching for the required setting…")
def _required(
    text: str, step_index: int, parameter: str, goal: str, target_min, bounds, root: str, generation: int
):
    mod = studies_module("inverse")
    parsed = _parse(text, root, generation)
    if not parsed.ok:
        return parsed
    try:
        return Outcome(
            mod.required_setting(
                parsed.value,
                step_index=step_index,
                parameter=parameter,
                goal=goal,
                library=_library(root, generation),
                target_min=target_min,
                bounds=bounds,
            )
        )
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def required_setting(
    text: str,
    step_index: int,
    parameter: str,
    goal: str,
    target_min: float | None = None,
    bounds: tuple[float, float] | None = None,
    generation: int = 0,
) -> Outcome:
    """The value of one parameter at which the plan just meets a goal (procplan.studies.inverse)."""
    return _required(text, step_index, parameter, goal, target_min, bounds, library_root(), generation)


@st.cache_resource(max_entries=16, show_spinner="Trying batch sizes…")
def _largest_batch(text: str, step_index: int, goal: str, target_min, root: str, generation: int):
    mod = studies_module("batch_size")
    parsed = _parse(text, root, generation)
    if not parsed.ok:
        return parsed
    try:
        return Outcome(
            mod.largest_batch(
                parsed.value,
                step_index=step_index,
                goal=goal,
                library=_library(root, generation),
                target_min=target_min,
            )
        )
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def largest_batch(text: str, step_index: int, goal: str, target_min=None, generation: int = 0) -> Outcome:
    """The largest batch that still meets a goal in a loaded machine (procplan.studies.batch_size)."""
    return _largest_batch(text, step_index, goal, target_min, library_root(), generation)


@st.cache_resource(max_entries=16, show_spinner="Sampling…")
def _variability(text, specs, n_samples, seed, step_index, method, corners, root, generation):
    mod = studies_module("variability")
    parsed = _parse(text, root, generation)
    if not parsed.ok:
        return parsed
    problems: list[Problem] = []
    dists = {}
    for name, spec in specs:
        try:
            dists[name] = mod.parse_distribution(spec)
        except InvalidInputError as exc:
            problems.extend(
                Problem(f"{name}: {p.field}", p.value, p.allowed, p.detail) for p in problems_of(exc)
            )
    if problems:
        return Outcome(problems=tuple(problems))
    try:
        return Outcome(
            mod.monte_carlo(
                parsed.value,
                dists,
                n_samples=n_samples,
                seed=seed,
                library=_library(root, generation),
                step_index=step_index,
                method=method,
                corners=corners,
            )
        )
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def variability(
    text: str,
    specs: tuple[tuple[str, str], ...],
    n_samples: int = 200,
    seed: int = 0,
    step_index: int = 0,
    method: str = "auto",
    corners: bool = False,
    generation: int = 0,
) -> Outcome:
    """Monte Carlo over uncertain inputs (procplan.studies.variability); specs are (variable, 'kind:p1,p2@lo,hi')."""
    return _variability(
        text, tuple(specs), n_samples, seed, step_index, method, corners, library_root(), generation
    )


@st.cache_data(max_entries=16, show_spinner=False)
def logger_preview(text: str) -> Outcome:
    """The first rows of a logger file with the guessed column mapping (procplan.studies.logger)."""
    mod = studies_module("logger")
    try:
        return Outcome(mod.preview_logger(text, n_rows=8))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


@st.cache_resource(max_entries=8, show_spinner="Fitting h to the logger curve…")
def _calibrate(plan_text, log_text, mapping, channel, clean, root, generation):
    lmod, cmod = studies_module("logger"), studies_module("calibrate")
    parsed = _parse(plan_text, root, generation)
    if not parsed.ok:
        return parsed
    try:
        log = lmod.read_logger(log_text, lmod.ColumnMapping(*mapping))
        if clean:
            log = lmod.clean_logger(log)
        return Outcome(cmod.calibrate(parsed.value, log, channel=channel, library=_library(root, generation)))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))


def calibrate(
    plan_text: str,
    log_text: str,
    mapping: tuple,
    channel: str,
    clean: bool = True,
    generation: int = 0,
) -> Outcome:
    """Fit the plan's step h to a logger curve; mapping = (time column, time unit, channels, temperature unit)."""
    return _calibrate(plan_text, log_text, tuple(mapping), channel, clean, library_root(), generation)


@st.cache_data(max_entries=8, show_spinner="Running the catalogue sweep…")
def _sweep(products: tuple[str, ...], equipment: tuple[str, ...], root: str, generation: int, _progress=None):
    mod = studies_module(
        "sweep"
    )  # _progress(done, total), not part of the cache key, is called on a miss only
    try:
        res = mod.sweep_catalogue(
            _library(root, generation), products=list(products), equipment=list(equipment), progress=_progress
        )
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))
    return Outcome((res.table, tuple(res.skipped)))


def sweep(
    products: tuple[str, ...], equipment: tuple[str, ...], generation: int = 0, progress=None
) -> Outcome:
    """Every chosen product in every chosen suitable machine (procplan.studies.sweep): (table, skipped)."""
    return _sweep(tuple(products), tuple(equipment), library_root(), generation, progress)


def save_measured_h(plan_text: str, calibration, data_source: str, generation: int = 0) -> Outcome:
    """Save a fitted h of the plan's first step as a measured value in the library (procplan.files.library)."""
    from procplan.files.library import save_measurement

    parsed = _parse(plan_text, library_root(), generation)
    if not parsed.ok:
        return parsed
    plan = parsed.value
    step = plan.steps[0]
    cmod = studies_module("calibrate")
    try:
        rec = cmod.fitted_h_record(
            calibration,
            product=plan.product.name,
            equipment=step.equipment,
            settings=step.settings_dict,
            data_source=data_source or "logger file uploaded in the app",
        )
        return Outcome(save_measurement(library_root(), rec))
    except InvalidInputError as exc:
        return Outcome(problems=problems_of(exc))
