"""Compare scenarios: several plans (or variants of one plan) run side by side and ranked.

:func:`variants_of` builds variants of a plan with :func:`dataclasses.replace` (another machine or other
settings for a step, another size, another product, another start temperature); :func:`compare_plans` runs
each with :func:`procplan.run.engine.run_plan` and returns a :class:`Comparison`: one row per scenario with the
figures of :data:`procplan.studies.metrics.METRIC_COLUMNS`, a ranking by one criterion of
:data:`procplan.studies.metrics.CRITERIA`, and the PlanResults for overlaid charts.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field, replace
from typing import Any

import pandas as pd

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.files.product import check_proportions
from procplan.model import DIMENSION_KEYS, Plan
from procplan.studies.metrics import CRITERIA, METRIC_COLUMNS, result_metrics

#: Keys a variant may change, with what they do.
VARIANT_KEYS: dict[str, str] = {
    "name": "label of the scenario (default: a description of the changes)",
    "step": "index of the step the step keys apply to (default 0)",
    "equipment": "machine id of the step (its settings are replaced by 'settings', else the machine's defaults)",
    "settings": "settings of the step's machine, merged into the current ones",
    "h_W_m2K": "a given surface coefficient for the step (the step then names no machine)",
    "medium_C": "medium temperature of a step with a given h [°C]",
    "duration_min": "duration of the step [min]",
    "stop_when_core_C": "stop condition of the step [°C]",
    "product": "another product: a library product name or a procplan.files.plan.Product",
    "start_C": "start temperature [°C]",
    "cooling_rule": "the plan's cooling rule (a library rule name, or '' for none)",
    "margin_percent": "the site's safety margin [%]",
    "pieces": "pieces per batch (a loaded machine's medium and plant respond to it)",
    **{k: f"product {k[:-3]} [mm]" for k in DIMENSION_KEYS},
}


@dataclass(frozen=True, eq=False)
class Comparison:
    """Scenarios run side by side.

    table : one row per scenario (index: scenario name), columns of METRIC_COLUMNS plus ``rank``
    results : scenario name → PlanResult (for overlaid charts)
    criterion : the ranking criterion (a key of CRITERIA)
    ranking : scenario names, best first
    """

    table: pd.DataFrame
    results: dict[str, Any]
    criterion: str
    ranking: tuple[str, ...]
    errors: dict[str, str] = field(default_factory=dict)

    @property
    def best(self) -> str:
        return self.ranking[0]

    def histories(self) -> pd.DataFrame:
        """All histories stacked, with a ``scenario`` column, ready for an overlaid chart."""
        frames = [r.history.assign(scenario=name) for name, r in self.results.items()]
        return pd.concat(frames, ignore_index=True)


def _describe(change: Mapping[str, Any]) -> str:
    parts = []
    for k, v in change.items():
        if k in ("name", "step"):
            continue
        if k == "settings":
            parts.extend(
                f"{sk}={sv:g}" if isinstance(sv, int | float) else f"{sk}={sv}" for sk, sv in v.items()
            )
        elif k == "product" and not isinstance(v, str):
            parts.append(f"product={getattr(v, 'name', v)}")
        else:
            parts.append(f"{k}={v:g}" if isinstance(v, int | float) else f"{k}={v}")
    step = f"step {change['step']}: " if "step" in change else ""
    return step + ", ".join(parts) if parts else "as planned"


def _apply(plan: Plan, change: Mapping[str, Any], library, where: str) -> Plan:
    for k in change:
        if k not in VARIANT_KEYS:
            raise InvalidInputError(f"{where}.{k}", change[k], "one of " + ", ".join(VARIANT_KEYS))
    i = change.get("step", 0)
    if isinstance(i, bool) or not isinstance(i, int) or not 0 <= i < len(plan.steps):
        raise InvalidInputError(f"{where}.step", i, f"a step index 0 … {len(plan.steps) - 1}")
    step = plan.steps[i]
    sc = {**_surface_changes(step, i, change, library, where), **_timing_changes(change, where)}
    out = plan.with_step(i, **sc) if sc else plan
    out = _product_changes(out, change, library, where)
    out = _check_changes(out, change, where)
    name = change.get("name") or _describe(change)
    return replace(out, title=f"{plan.title} [{name}]")


def _surface_changes(step, i: int, change: Mapping[str, Any], library, where: str) -> dict[str, Any]:
    """Step fields for a change of machine, settings, h or medium temperature."""
    sc: dict[str, Any] = {}
    if "equipment" in change:
        eq = change["equipment"]
        if library is not None and eq not in library.equipment:
            raise InvalidInputError(
                f"{where}.equipment", eq, "one of " + ", ".join(sorted(library.equipment))
            )
        sc.update(
            equipment=eq, h_W_m2K=None, medium_C=None, medium_profile=(), settings=(), settings_profile=()
        )
    if "settings" in change:
        s = change["settings"]
        if not isinstance(s, Mapping):
            raise InvalidInputError(f"{where}.settings", s, "a table of machine settings")
        base = {} if "equipment" in change else step.settings_dict
        sc["settings"] = tuple(sorted({**base, **dict(s)}.items()))
        if (sc.get("equipment") or step.equipment) is None:
            raise InvalidInputError(f"{where}.settings", s, "a step with a machine", f"step {i} names none")
    if "h_W_m2K" in change:
        h = validate.positive(f"{where}.h_W_m2K", change["h_W_m2K"], "W/m²K")
        medium = change.get("medium_C", step.medium_C)
        if medium is None:
            raise InvalidInputError(f"{where}.medium_C", None, "a medium temperature [°C] with a given h")
        sc.update(h_W_m2K=h, equipment=None, settings=(), settings_profile=())
    if "medium_C" in change:
        sc["medium_C"] = validate.number(
            f"{where}.medium_C", change["medium_C"], minimum=-80, maximum=300, unit="°C"
        )
        sc["medium_profile"] = ()
        if (sc.get("h_W_m2K", step.h_W_m2K)) is None:
            raise InvalidInputError(
                f"{where}.medium_C",
                change["medium_C"],
                "a step with a given h",
                "set the machine's temperature in 'settings'",
            )
    return sc


def _timing_changes(change: Mapping[str, Any], where: str) -> dict[str, Any]:
    """Step fields for a change of duration or stop temperature."""
    sc: dict[str, Any] = {}
    if "duration_min" in change:
        d = validate.number(
            f"{where}.duration_min", change["duration_min"], minimum=0, min_inclusive=False, unit="min"
        )
        sc.update(duration_s=60.0 * d, duration_given=True)
    if "stop_when_core_C" in change:
        v = change["stop_when_core_C"]
        sc["stop_when_core_C"] = (
            None if v is None else validate.number(f"{where}.stop_when_core_C", v, unit="°C")
        )
    return sc


def _product_changes(out: Plan, change: Mapping[str, Any], library, where: str) -> Plan:
    """The plan with another product, other dimensions or another start temperature."""
    if "product" in change:
        p = change["product"]
        if isinstance(p, str):
            if library is None or p not in library.products:
                names = ", ".join(sorted(library.products)) if library is not None else "(no library)"
                raise InvalidInputError(f"{where}.product", p, f"one of {names}")
            p = library.products[p]
        out = replace(out, product=p)
    dims = {k[:-3] + "_m": change[k] for k in DIMENSION_KEYS if k in change}
    if dims:
        for k in dims:
            dims[k] = validate.positive(f"{where}.{k[:-2]}_mm", dims[k], "mm") / 1000.0
        geometry = replace(out.product.geometry, **dims)
        check_proportions(geometry, prefix=f"{where}.")
        out = replace(out, product=replace(out.product, geometry=geometry))
    if "start_C" in change:
        out = replace(
            out, start_temperature_C=validate.number(f"{where}.start_C", change["start_C"], unit="°C")
        )
    return out


def _check_changes(out: Plan, change: Mapping[str, Any], where: str) -> Plan:
    """The plan with another cooling rule or safety margin."""
    ch = {}
    if "cooling_rule" in change:
        ch["cooling_rule"] = change["cooling_rule"] or None
    if "margin_percent" in change:
        ch["margin_percent"] = validate.number(
            f"{where}.margin_percent", change["margin_percent"], minimum=0, unit="%"
        )
    if "pieces" in change:
        n = change["pieces"]
        if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= 10_000_000:
            raise InvalidInputError(f"{where}.pieces", n, "a whole number from 1 to 10 000 000")
        ch["pieces_per_batch"] = n
    return replace(out, checks=replace(out.checks, **ch)) if ch else out


def variants_of(plan: Plan, changes: Sequence[Mapping[str, Any]], *, library=None) -> list[Plan]:
    """Variants of ``plan``, one per dict of changes (keys of :data:`VARIANT_KEYS`).

    Each variant's title is the plan's title with the variant's name (or a description of its changes) in
    brackets; :func:`compare_plans` uses it as the scenario name.

    Parameters
    ----------
    plan : the base plan
    changes : e.g. ``[{"step": 0, "settings": {"air_C": -10}}, {"equipment": "chiller-b1"}, {"diameter_mm": 70}]``
    library : resolves product names and checks machine ids

    Examples
    --------
    >>> from procplan.geometry import Geometry
    >>> from procplan.model import Plan, Product, Step, FixedProperties
    >>> prod = Product("slab", Geometry("slab", thickness_m=0.05), fixed_properties=FixedProperties(0.5, 1000, 3500))
    >>> base = Plan("p", prod, 70.0, (Step("chill", 3600.0, 5.0, medium_C=0.0, h_W_m2K=20.0),))
    >>> [v.steps[0].h_W_m2K for v in variants_of(base, [{"h_W_m2K": 40}, {"name": "thin", "thickness_mm": 30}])]
    [40.0, 20.0]
    >>> variants_of(base, [{"name": "thin", "thickness_mm": 30}])[0].title
    'p [thin]'
    """
    if isinstance(changes, Mapping):
        changes = [changes]
    return [_apply(plan, c, library, f"changes[{j}]") for j, c in enumerate(changes)]


def compare_plans(
    plans: Sequence[Plan],
    *,
    library=None,
    names: Sequence[str] | None = None,
    criterion: str = "time",
    solver: str | None = None,
    n_nodes=None,
    dt_s: float | None = None,
    progress: Callable[[int, int, str], None] | None = None,
    stop=None,
) -> Comparison:
    """Run each plan and tabulate the scenarios, ranked by ``criterion``.

    Parameters
    ----------
    plans : the scenarios (e.g. a plan and its :func:`variants_of`)
    library : resolves machines and rules (see :func:`procplan.run.engine.run_plan`)
    names : scenario names (default: the plans' titles, made unique)
    criterion : a key of CRITERIA: "time", "energy" or "margin"
    solver, n_nodes, dt_s : passed to run_plan
    progress : called as progress(done, total, name) after each run
    stop : a ``threading.Event``; when set, the comparison ends between runs with ``StudyStopped``

    Returns
    -------
    Comparison; the table's columns are METRIC_COLUMNS and ``rank`` (1 = best)
    """
    from procplan.run.engine import run_plan
    from procplan.studies.runner import check_stop

    validate.choice("criterion", criterion, CRITERIA)
    plans = list(plans)
    if not plans:
        raise InvalidInputError("plans", [], "at least one plan")
    if names is None:
        names = []
        for p in plans:
            n, j = p.title, 2
            while n in names:
                n, j = f"{p.title} ({j})", j + 1
            names.append(n)
    names = [str(n) for n in names]
    if len(names) != len(plans) or len(set(names)) != len(names):
        raise InvalidInputError("names", names, f"{len(plans)} distinct names, one per plan")
    results: dict[str, Any] = {}
    rows = []
    for j, (name, plan) in enumerate(zip(names, plans, strict=True)):
        check_stop(stop, j, len(plans))
        res = run_plan(plan, library=library, solver=solver, n_nodes=n_nodes, dt_s=dt_s)
        results[name] = res
        rows.append({"scenario": name, **result_metrics(res)})
        if progress is not None:
            progress(j + 1, len(plans), name)
    table = pd.DataFrame(rows, columns=["scenario", *METRIC_COLUMNS]).set_index("scenario")
    score = CRITERIA[criterion][0]
    scores = [score(r) for r in rows]
    order = sorted(range(len(rows)), key=lambda i: (scores[i], i))
    ranking = tuple(names[i] for i in order)
    table["rank"] = [order.index(i) + 1 for i in range(len(rows))]
    return Comparison(table=table, results=results, criterion=criterion, ranking=ranking)


#: Entries of a plan that are words about it, not inputs of the calculation.
_NOT_INPUTS = {"title", "notes", "description", "library"}


def _flat_inputs(data: Any, label: str, out: dict[str, Any]) -> None:
    """The plan's inputs as (readable label → value), units in the labels."""
    from procplan.output.xlsx import header

    if isinstance(data, dict):
        for k, v in data.items():
            if k in _NOT_INPUTS:
                continue
            if k == "steps" and isinstance(v, list):
                for i, step in enumerate(v):
                    _flat_inputs(step, f"step {i + 1}", out)
            else:
                _flat_inputs(v, f"{label}: {header(str(k))}" if label else header(str(k)), out)
    elif isinstance(data, list):
        out[label] = "; ".join(
            ", ".join(f"{header(str(k))} {x}" for k, x in item.items())
            if isinstance(item, dict)
            else str(item)
            for item in data
        )
    else:
        out[label] = data


def plan_differences(plans, names) -> pd.DataFrame:
    """The inputs that differ between plans: one row per input ("step 1: settings: air [°C]"), one column
    per scenario name; an input a plan does not give reads "not set" (the machine's or the library's default).

    >>> from procplan.files.library import load_library
    >>> lib = load_library()
    >>> a = lib.plan("roulade-blast-chill")
    >>> b = a.with_step(0, settings=(("air_C", -10.0), ("air_speed_m_s", 4.0)))
    >>> plan_differences([a, b], ["as planned", "colder air"]).to_dict("index")
    {'step 1: settings: air [°C]': {'as planned': -6, 'colder air': -10}}
    """
    from procplan.files.plan import plan_to_dict

    flats = []
    for plan in plans:
        flat: dict[str, Any] = {}
        _flat_inputs(plan_to_dict(plan), "", flat)
        flats.append(flat)
    keys: list[str] = []
    for flat in flats:
        keys += [k for k in flat if k not in keys]
    rows = {}
    for k in keys:
        values = [flat.get(k, "not set") for flat in flats]
        if any(v != values[0] for v in values[1:]):
            rows[k] = values
    frame = pd.DataFrame.from_dict(rows, orient="index", columns=list(names))
    frame.index.name = "input"
    return frame
