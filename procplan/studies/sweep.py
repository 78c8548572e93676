"""Catalogue sweep: every product in every suitable machine, one row per pair.

Suitability is by the machine's kind (:data:`KIND_TASKS`): chillers and cold rooms cool, freezers freeze,
ovens and water baths heat. Each kind has a documented start temperature, a core target and, for chillers of
cooked food, a cooling rule; the machine runs at its default settings. The runs go through
:func:`procplan.studies.runner.run_jobs`, so any ``concurrent.futures.Executor`` (a ``ProcessPoolExecutor``,
or a Dask distributed ``Client``) runs them unchanged; the default is sequential, in this process.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import pandas as pd

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.model import Checks, Plan, Step
from procplan.run.drip import cook_loss_text, yield_text
from procplan.studies.metrics import DRYING_METRIC_COLUMNS, METRIC_COLUMNS, SALT_METRIC_COLUMNS
from procplan.studies.runner import make_job, run_jobs


@dataclass(frozen=True)
class KindTask:
    """What a machine of one kind is asked to do in a sweep.

    process : "cooling", "freezing" or "heating"
    start_C : product start temperature [°C]
    target_C : core temperature to reach [°C] (the step's stop condition)
    max_min : longest step [min]; not reaching the target in it is a result
    rule : cooling rule applied when the library has it (None: no rule)
    why : the basis of these numbers
    """

    process: str
    start_C: float
    target_C: float
    max_min: float
    rule: str | None
    why: str


_COOKED = (
    "cooked food leaving the cook at 74 °C core, chilled to 5 °C core under the US Food Code two-stage rule"
)
#: Machine kind → task. One registry: the sweep, the CLI and the app read it.
KIND_TASKS: dict[str, KindTask] = {
    "blast-chiller": KindTask("cooling", 74.0, 5.0, 12 * 60.0, "us-food-code-two-stage", _COOKED),
    "chill-tunnel": KindTask("cooling", 74.0, 5.0, 12 * 60.0, "us-food-code-two-stage", _COOKED),
    "ice-water-tank": KindTask("cooling", 74.0, 5.0, 12 * 60.0, "us-food-code-two-stage", _COOKED),
    "brine-chiller": KindTask("cooling", 74.0, 5.0, 12 * 60.0, "us-food-code-two-stage", _COOKED),
    "cold-room": KindTask(
        "cooling", 20.0, 5.0, 24 * 60.0, None, "goods at room temperature (20 °C) cooled to 5 °C core"
    ),
    "pharma-cold-room": KindTask(
        "cooling",
        22.0,
        8.0,
        24 * 60.0,
        None,
        "filled goods at 22 °C brought into the 2–8 °C range (core 8 °C)",
    ),
    "spiral-freezer": KindTask(
        "freezing", 5.0, -18.0, 24 * 60.0, None, "chilled goods at 5 °C frozen to −18 °C core"
    ),
    "controlled-rate-freezer": KindTask(
        "freezing", 5.0, -18.0, 24 * 60.0, None, "chilled goods at 5 °C frozen to −18 °C core"
    ),
    "convection-oven": KindTask(
        "heating", 4.0, 75.0, 12 * 60.0, None, "chilled goods at 4 °C cooked to 75 °C core"
    ),
    "dry-heat-tunnel": KindTask(
        "heating", 25.0, 250.0, 60.0, None, "glassware at 25 °C heated to 250 °C (depyrogenation)"
    ),
    "steam-oven": KindTask(
        "heating", 4.0, 75.0, 12 * 60.0, None, "chilled goods at 4 °C cooked to 75 °C core"
    ),
    "water-bath": KindTask(
        "heating",
        4.0,
        72.0,
        12 * 60.0,
        None,
        "chilled goods at 4 °C heated to 72 °C core (below a 99 °C bath)",
    ),
}


def pair_plan(product, equipment, library=None, task: KindTask | None = None, pieces: int = 1) -> Plan:
    """The one-step plan a sweep runs for a product in a machine (at the machine's default settings).

    >>> from procplan.files.library import load_library
    >>> lib = load_library()
    >>> p = pair_plan(lib.products["chicken-roulade"], lib.equipment["chiller-b2"], lib)
    >>> p.start_temperature_C, p.steps[0].stop_when_core_C, p.checks.cooling_rule
    (74.0, 5.0, 'us-food-code-two-stage')
    """
    task = task or KIND_TASKS.get(equipment.kind)
    if task is None:
        raise InvalidInputError("equipment.kind", equipment.kind, "one of " + ", ".join(KIND_TASKS))
    rule = task.rule if (task.rule and library is not None and task.rule in library.rules) else None
    step = Step(
        name=f"{task.process} in the {equipment.kind.replace('-', ' ')}",
        duration_s=60.0 * task.max_min,
        stop_when_core_C=task.target_C,
        equipment=equipment.id,
        settings=tuple(sorted(equipment.defaults().items())),
        duration_given=False,
    )
    return Plan(
        title=f"{product.name} in {equipment.name}",
        product=product,
        start_temperature_C=task.start_C,
        steps=(step,),
        checks=Checks(cooling_rule=rule, pieces_per_batch=int(pieces)),
    )


@dataclass(frozen=True, eq=False)
class SweepResult:
    """table : one row per (product, machine) with METRIC_COLUMNS, kind, process, error; plans : the plans run"""

    table: pd.DataFrame
    plans: dict[tuple[str, str], Plan]
    skipped: tuple[str, ...] = field(default=())

    def to_csv(self, path) -> None:
        self.table.to_csv(path, index=False)


def sweep_catalogue(
    library,
    *,
    products: Sequence[str] | None = None,
    equipment: Sequence[str] | None = None,
    kinds: Sequence[str] | None = None,
    executor="auto",
    solver: str | None = None,
    n_nodes=None,
    dt_s: float | None = None,
    progress: Callable[[int, int], None] | None = None,
    pieces: int = 1,
    stop=None,
) -> SweepResult:
    """Run every chosen product in every chosen suitable machine.

    Parameters
    ----------
    library : the library whose products and machines are swept
    products, equipment : names to include (default: all)
    kinds : machine kinds to include (default: every kind of KIND_TASKS)
    executor : "auto" (default: a process pool on the machine's cores when it pays), None (in this process),
        or any concurrent.futures.Executor (or a Dask Client); see :func:`procplan.studies.runner.run_jobs`
    solver, n_nodes, dt_s : passed to run_plan
    progress : progress(done, total)
    pieces : pieces per batch in every machine (a machine with a thermal description carries the batch, and
        the table's ``capacity_shortfall_kW`` says by how much its plant falls short)
    stop : a ``threading.Event``; when set, the sweep ends between runs with ``StudyStopped``

    Returns
    -------
    SweepResult; pairs that fail validation keep their row with the error text. Where a run took up salt or
    dried an unwrapped product, the table gains the salt and weight-loss columns of
    :mod:`procplan.studies.metrics` (empty in the other rows)
    """
    pieces = int(validate.number("pieces", pieces, minimum=1, maximum=10_000_000))
    prods = sorted(library.products) if products is None else list(products)
    eqs = sorted(library.equipment) if equipment is None else list(equipment)
    for p in prods:
        if p not in library.products:
            raise InvalidInputError("products", p, "one of " + ", ".join(sorted(library.products)))
    for e in eqs:
        if e not in library.equipment:
            raise InvalidInputError("equipment", e, "one of " + ", ".join(sorted(library.equipment)))
    for k in kinds or ():
        if k not in KIND_TASKS:
            raise InvalidInputError("kinds", k, "one of " + ", ".join(KIND_TASKS))
    skipped = []
    pairs, plans, jobs = [], {}, []
    for e in eqs:
        eq = library.equipment[e]
        if eq.kind not in KIND_TASKS or (kinds is not None and eq.kind not in kinds):
            skipped.append(f"{e} ({eq.kind})")
            continue
        for p in prods:
            plan = pair_plan(library.products[p], eq, library, pieces=pieces)
            plans[(p, e)] = plan
            pairs.append((p, e))
            jobs.append(make_job((p, e), plan, library, solver=solver, n_nodes=n_nodes, dt_s=dt_s))
    outs = run_jobs(jobs, executor=executor, progress=progress, stop=stop)
    rows = []
    for (p, e), out in zip(pairs, outs, strict=True):
        eq = library.equipment[e]
        task = KIND_TASKS[eq.kind]
        base = {
            "product": p,
            "equipment": e,
            "kind": eq.kind,
            "process": task.process,
            "start_C": task.start_C,
        }
        m = out["metrics"] or {k: None for k in METRIC_COLUMNS}
        rows.append({**base, **m, "error": out["error"] or ""})
    cols = [
        "product",
        "equipment",
        "kind",
        "process",
        "start_C",
        *METRIC_COLUMNS,
        *extra_columns(rows),
        "error",
    ]
    return SweepResult(pd.DataFrame(rows, columns=cols), plans, tuple(skipped))


def extra_columns(rows) -> list[str]:
    """The salt (:data:`SALT_METRIC_COLUMNS`) and weight-loss (:data:`DRYING_METRIC_COLUMNS`) columns of a
    table, where any of its rows has them (a brining or drying run); the other rows leave them empty."""
    return [k for k in (*SALT_METRIC_COLUMNS, *DRYING_METRIC_COLUMNS) if any(k in r for r in rows)]


def _present(row, key: str) -> bool:
    v = row.get(key)
    return v is not None and v == v


def row_mass_text(row) -> str:
    """A sweep row's salt and weight loss in words, where its run had them (empty otherwise).

    >>> row_mass_text({"weight_loss_percent": 11.7, "yield_percent": 88.3, "weight_stop_min": float("nan")})
    '; weight loss 11.7 %, yield 88.3 %'
    """
    out = ""
    if _present(row, "salt_core_percent"):
        t = row.get("salt_time_min")
        out += f"; salt at the core {row['salt_core_percent']:.2f} %"
        out += f" after {t:.1f} min" if _present(row, "salt_time_min") and t is not None else ""
    if _present(row, "cook_loss_upper_percent"):
        out += f"; {cook_loss_text(row['weight_loss_percent'], row['cook_loss_upper_percent'])}, "
        out += yield_text(row["yield_lower_percent"], row["yield_percent"])
    elif _present(row, "yield_percent"):
        out += f"; weight loss {row['weight_loss_percent']:.1f} %, yield {row['yield_percent']:.1f} %"
        if _present(row, "weight_stop_min"):
            out += f", weight stop after {row['weight_stop_min']:.1f} min"
    return out
