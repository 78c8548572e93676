"""Excel workbooks of a run and of the studies: one sheet per table, the unit in every header.

A workbook opens with an "About" sheet (title, what each sheet holds, procplan version, the standing
caution); every table sheet starts at its first row with the header, so that a plant's spreadsheet, LIMS
import or ``pandas.read_excel`` reads it as it is, and carries the caution in its printed footer.

Headers come from the library's column names through :func:`header`: ``time_s`` → "time [s]",
``core_C`` → "core [°C]", ``energy_removed_kWh`` → "energy removed [kWh]". A temperature table can be
written in °F and a time column in minutes or hours (:func:`history_table`); the numbers are the library's,
converted only here. openpyxl is imported on first use.
"""

from __future__ import annotations

import datetime as _dt
import io
import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np
import pandas as pd

from procplan._version import __version__
from procplan.caution import CAUTION
from procplan.run.drip import CAUTION as DRIP_CAUTION
from procplan.run.drip import run_bracket

#: Unit suffixes of the library's column names and how a header shows them (longest first).
UNIT_SUFFIXES: tuple[tuple[str, str], ...] = (
    ("_m2K_W", "m²K/W"),
    ("_W_m2K", "W/m²K"),
    ("_J_kgK", "J/(kg·K)"),
    ("_kg_m3", "kg/m³"),
    ("_W_mK", "W/(m·K)"),
    ("_percent", "%"),
    ("_J_kg", "J/kg"),
    ("_m_s", "m/s"),
    ("_kWh", "kWh"),
    ("_min", "min"),
    ("_kW", "kW"),
    ("_kg", "kg"),
    ("_mm", "mm"),
    ("_W", "W"),
    ("_J", "J"),
    ("_s", "s"),
    ("_h", "h"),
    ("_C", "°C"),
    ("_F", "°F"),
    ("_K", "K"),
)
#: Excel limits a sheet name to 31 characters and forbids some characters.
_SHEET_NAME_MAX = 31
_FORBIDDEN = set("[]:*?/\\")


def header(column: str) -> str:
    """A readable header with its unit from a library column name.

    >>> header("time_s"), header("core_C"), header("h_W_m2K"), header("rule_passed"), header("Lot")
    ('time [s]', 'core [°C]', 'h [W/m²K]', 'rule passed', 'Lot')
    >>> header("energy_removed_kWh"), header("lethality_F_min"), header("margin_percent")
    ('energy removed [kWh]', 'lethality F [min]', 'margin [%]')
    """
    for suffix, unit in UNIT_SUFFIXES:
        if column.endswith(suffix) and len(column) > len(suffix):
            return f"{column[: -len(suffix)].replace('_', ' ')} [{unit}]"
    return column.replace("_", " ")


@dataclass(frozen=True)
class Sheet:
    """One table of a workbook: its sheet name, a one-line description and the table."""

    name: str
    description: str
    table: pd.DataFrame


def _sheet_name(name: str, used: set[str]) -> str:
    clean = "".join("-" if ch in _FORBIDDEN else ch for ch in name).strip("'") or "Sheet"
    clean = clean[:_SHEET_NAME_MAX]
    out, n = clean, 2
    while out.lower() in used:
        tail = f" ({n})"
        out, n = clean[: _SHEET_NAME_MAX - len(tail)] + tail, n + 1
    used.add(out.lower())
    return out


def _cell(value):
    """A value Excel can hold: NaN and infinity become empty cells, numpy scalars Python ones."""
    if value is None:
        return None
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, (bool, int, float, str, _dt.date, _dt.datetime)):
        return value
    return str(value)


def workbook_bytes(title: str, sheets: Sequence[Sheet], notes: Iterable[str] = ()) -> bytes:
    """The workbook (xlsx bytes): an "About" sheet, then one sheet per table with headers in row 1."""
    from openpyxl import Workbook
    from openpyxl.styles import Alignment, Font

    wb = Workbook()
    about = wb.active
    about.title = "About"
    used = {"about"}
    names = [_sheet_name(s.name, used) for s in sheets]
    rows = [
        ("Title", title),
        ("Made by", f"procplan {__version__}"),
        ("Made on", _dt.datetime.now().replace(microsecond=0).isoformat(sep=" ")),
        ("Caution", CAUTION),
        *(("Note", n) for n in notes),
        ("", ""),
        ("Sheet", "What it holds"),
        *zip(names, (s.description for s in sheets), strict=True),
    ]
    for r in rows:
        about.append(list(r))
    about.column_dimensions["A"].width = 24
    about.column_dimensions["B"].width = 110
    for row in about.iter_rows(min_col=2, max_col=2):
        row[0].alignment = Alignment(wrap_text=True, vertical="top")
    for row in about.iter_rows(min_col=1, max_col=1):
        row[0].font = Font(bold=True)
    for name, sheet in zip(names, sheets, strict=True):
        ws = wb.create_sheet(name)
        table = sheet.table
        ws.append([str(c) for c in table.columns])
        for values in table.itertuples(index=False, name=None):
            ws.append([_cell(v) for v in values])
        for j, col in enumerate(table.columns, start=1):
            ws.cell(row=1, column=j).font = Font(bold=True)
            width = max([len(str(col))] + [len(str(v)) for v in table[col].head(200)])
            ws.column_dimensions[ws.cell(row=1, column=j).column_letter].width = min(max(width + 2, 8), 60)
        ws.freeze_panes = "A2"
        ws.oddFooter.center.text = CAUTION
        ws.oddHeader.center.text = f"{title} — {sheet.description}"[:250]
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def readable(table: pd.DataFrame) -> pd.DataFrame:
    """The table with headers that carry their units (the index, when named, becomes the first column)."""
    t = table.reset_index() if table.index.name else table.reset_index(drop=True)
    return t.rename(columns={c: header(str(c)) for c in t.columns})


# --- the tables of a run and of each study ----------------------------------------------------------


def history_table(result, temperature_unit: str = "C", time_unit: str = "min") -> pd.DataFrame:
    """A run's history with the chosen display units ("C"/"F", "min"/"h") in the headers; time in seconds
    is kept beside the chosen time column; heat flow stays in W."""
    from procplan.units import c_to_f

    h = result.history.copy()
    h.insert(1, f"time_{time_unit}", h["time_s"] / (3600.0 if time_unit == "h" else 60.0))
    if temperature_unit == "F":
        renamed = {c: c[:-2] + "_F" for c in h.columns if c.endswith("_C")}
        for c in renamed:
            h[c] = c_to_f(h[c].to_numpy())
        h = h.rename(columns=renamed)
    h = h.drop(columns=[c for c in ("step_index",) if c in h.columns])
    return readable(h)


def summary_table(result) -> pd.DataFrame:
    """The run's key figures (one row each: quantity, value, unit), the same numbers as the summary JSON."""
    from procplan.output.report import summary_dict

    s = summary_dict(result)
    rows: list[tuple[str, object, str]] = [
        ("plan", s["title"], ""),
        ("product", s["product"], ""),
        ("geometry", s["geometry"], ""),
        ("piece mass", s["piece_mass_kg"], "kg"),
        ("start temperature", s["start_temperature_C"], "°C"),
        ("process time", s["end"]["time_s"] / 60.0, "min"),
        ("core at the end", s["end"]["core_C"], "°C"),
        ("surface at the end", s["end"]["surface_C"], "°C"),
        ("mean at the end", s["end"]["mean_C"], "°C"),
    ]
    oc = result.outcomes
    if oc is not None:
        for tg in oc.targets:
            tr = tg.target
            label = f"{tg.step}: {tg.label or tg.point} to {tr.target_C:g} °C"
            rows.append(
                (
                    label + ", time in step",
                    (tr.time_s - (tr.start_s or 0.0)) / 60.0 if tr.reached else None,
                    "min",
                )
            )
            if tg.margin is not None:
                rows.append((label + ", plan time with margin", tg.margin.plan_min, "min"))
        if oc.rule_check is not None:
            rc = oc.rule_check
            rows.append((f"cooling or holding rule at the {rc.point}", "pass" if rc.passed else "FAIL", ""))
            rows.append(("rule source", rc.source, ""))
        for leth in (oc.lethality, oc.quality):
            if leth is not None:
                rows.append((f"F ({leth.name}) at the {leth.point}", leth.total_F_min, "min"))
                if leth.required_F_min is not None:
                    rows.append((f"required F ({leth.name})", leth.required_F_min, "min"))
        en = oc.energy
        rows += [
            ("pieces per batch", en.pieces, ""),
            ("heat removed per batch", en.heat_removed_J_per_batch / 3.6e6, "kWh"),
            ("heat added per batch", en.heat_added_J_per_batch / 3.6e6, "kWh"),
            ("peak duty (largest 1-min mean) per batch", en.peak_duty_kW_per_batch, "kW"),
        ]
        for step_name, pct in oc.weight_loss_percent:
            rows.append((f"{step_name}: weight loss by evaporation", pct, "%"))
        bracket = run_bracket(oc)
        if bracket is not None:
            lo, hi, y_lo, y_hi = bracket
            rows += [
                ("cook loss, lower (evaporation)", lo, "%"),
                (
                    "cook loss, upper (with all the juice the heated meat can no longer hold draining out)",
                    hi,
                    "%",
                ),
                ("yield, lower", y_lo, "%"),
                ("yield, upper", y_hi, "%"),
                ("cook loss and yield", DRIP_CAUTION, ""),
            ]
        if oc.cost_per_batch is not None and oc.price is not None:
            rows.append(("electricity cost per batch", oc.cost_per_batch, oc.price.currency))
    rows += [("warning", w, "") for w in s["warnings"]]
    return pd.DataFrame(rows, columns=["quantity", "value", "unit"])


def run_workbook(result, temperature_unit: str = "C", time_unit: str = "min") -> bytes:
    """A run: key figures and the history."""
    return workbook_bytes(
        result.plan.title,
        [
            Sheet("Summary", "key figures of the run (same numbers as the summary JSON)", summary_table(result)),
            Sheet("History", "temperatures and heat flow of one piece against time", history_table(result, temperature_unit, time_unit)),
        ],
    )  # fmt: skip


def comparison_workbook(comparison, differences: pd.DataFrame | None = None) -> bytes:
    """Scenarios side by side (procplan.studies.compare); ``differences`` lists the settings that differ."""
    sheets = [
        Sheet(
            "Comparison",
            f"scenarios ranked by {comparison.criterion} (rank 1 = best)",
            readable(comparison.table),
        )
    ]
    if differences is not None and not differences.empty:
        sheets.append(
            Sheet("Differences", "the inputs that differ between the scenarios", readable(differences))
        )
    for name, result in comparison.results.items():
        sheets.append(Sheet(f"History {name}", f"history of scenario {name}", history_table(result)))
    return workbook_bytes("Comparison of scenarios", sheets)  # fmt: skip


def sweep_workbook(table: pd.DataFrame, skipped: Iterable[str] = ()) -> bytes:
    """The catalogue sweep: one row per product and machine."""
    skipped = list(skipped)
    notes = [f"machines without a sweep task, skipped: {', '.join(skipped)}"] if skipped else []
    return workbook_bytes("Catalogue sweep", [Sheet("Sweep", "every product in every suitable machine", readable(table))], notes)  # fmt: skip


def variability_workbook(res) -> bytes:
    """A Monte Carlo study: percentiles, probabilities and every sample."""
    pct = pd.DataFrame(
        [{"quantity": header(k), **{p: v for p, v in d.items()}} for k, d in res.percentiles.items()]
    )
    prob = pd.DataFrame(
        [
            ("target not reached", res.p_not_reached),
            ("rule fails", res.p_rule_fail),
            ("lethality short", res.p_lethality_fail),
        ],
        columns=["event", "probability"],
    )
    sheets = [
        Sheet("Percentiles", "percentiles over the samples (empty: more samples than that share not reached)", pct),
        Sheet("Probabilities", "share of the samples in which each event happens (empty: not applicable)", prob),
        Sheet("Samples", f"{res.n_samples} samples, method {res.method}, seed {res.seed}", readable(res.samples)),
    ]  # fmt: skip
    if res.corners is not None and not res.corners.empty:
        sheets.append(Sheet("Corners", "worst-case corner runs", readable(res.corners)))
    return workbook_bytes("Variability study", sheets, res.notes)


def calibration_workbook(cal) -> bytes:
    """A fit of h to a logger curve: the fitted values and the residuals."""
    fit = pd.DataFrame(
        [
            ("probe", cal.channel, ""),
            ("fitted h", cal.h_W_m2K, "W/m²K"),
            ("fitted h, 95 % interval low", cal.h_ci95[0], "W/m²K"),
            ("fitted h, 95 % interval high", cal.h_ci95[1], "W/m²K"),
            ("h of the plan", cal.plan_h_W_m2K, "W/m²K"),
            ("packaging resistance inside h", cal.packaging_resistance_m2K_W, "m²K/W"),
            ("RMS residual", cal.rmse_K, "K"),
            ("points fitted", cal.n_points, ""),
        ],
        columns=["quantity", "value", "unit"],
    )
    return workbook_bytes(
        "Calibration of h to a logger curve",
        [
            Sheet("Fit", "the fitted surface coefficient and its interval", fit),
            Sheet("Residuals", "measured, fitted and predicted temperatures and the residual", readable(cal.residuals)),
        ],
        cal.notes,
    )  # fmt: skip
