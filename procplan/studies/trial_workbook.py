"""The heat-penetration study as an Excel workbook: one sheet per table, the unit in every header.

Sheets: the study (plan, criterion, slowest probe across runs, requirement, verdict), the runs (alignment,
come-up time, slowest probe per run), the probes (measured lethality per probe), the slowest unit (the runs'
slowest probes and the lower tolerance bound), the heating and cooling factors with the formula method's
time beside the general method's, and the residuals of the plan's prediction against the measurement (per
probe and every reading). Every number is the one :func:`procplan.studies.trials.trial_study` computed;
times are converted from seconds to minutes here only. The sheets are written by
:func:`procplan.output.xlsx.workbook_bytes` (the caution on the About sheet and in every footer).
"""

from __future__ import annotations

import pandas as pd

from procplan.output.xlsx import Sheet, workbook_bytes

#: Words for a probe's position (what the probe map calls it) in the sheets.
POSITION_WORDS = {"core": "core", "surface": "surface", "mean": "mean", "medium": "medium"}


def _min(seconds: float | None) -> float | None:
    return None if seconds is None else seconds / 60.0


def _yes(flag: bool | None) -> str:
    return "" if flag is None else ("yes" if flag else "no")


def _basis_rows(study) -> list[tuple[str, object, str]]:
    basis = study.lethality
    if basis is None:
        return [("lethality check", "none: probes ranked by their lag behind the medium", "")]
    rows: list[tuple[str, object, str]] = []
    if basis.preset is not None:
        rows.append(("lethality preset", basis.preset.name, ""))
        rows.append(("what it targets", basis.preset.target, ""))
        rows.append(("source of the preset", basis.preset.source_text, ""))
    rows.append(("reference temperature", basis.reference_C, "°C"))
    if basis.z_C is not None:
        rows.append(("z-value", basis.z_C, "°C"))
    else:
        rows.append(("z-value", "none: lethality from the preset's table", ""))
        rows.append(("lethality F counts", "equivalent minutes at the table's reference temperature", ""))
    return rows


def study_table(study) -> pd.DataFrame:
    """The study in rows of quantity, value and unit: what was judged, by what, and the verdict."""
    rows: list[tuple[str, object, str]] = [
        ("plan", study.plan.title, ""),
        ("runs", len(study.runs), ""),
        ("probes", len(study.probes), ""),
        ("slowest probe is the one with the", study.criterion, ""),
        ("slowest probe across runs", study.slowest_channel, ""),
        ("run of the slowest probe", study.slowest_run, ""),
        *_basis_rows(study),
        ("required lethality F", study.required_F_min, "min"),
        ("verdict", study.verdict, ""),
        ("passed", _yes(study.passed), ""),
    ]
    cal = study.calibration
    if cal is not None:
        rows += [
            ("surface coefficient fitted to every probe", cal.h_W_m2K, "W/m²K"),
            ("fitted surface coefficient, 95 % interval low", cal.h_ci95[0], "W/m²K"),
            ("fitted surface coefficient, 95 % interval high", cal.h_ci95[1], "W/m²K"),
            ("surface coefficient of the plan", cal.plan_h_W_m2K, "W/m²K"),
        ]
    return pd.DataFrame(rows, columns=["quantity", "value", "unit"])


def runs_table(study) -> pd.DataFrame:
    """One row per run: alignment, come-up time, start temperature and the run's slowest probe."""
    rows = []
    for r in study.runs:
        slow = next(p for p in r.probes if p.channel == r.slowest)
        rows.append(
            {
                "run": r.name,
                "step start in the record [min]": r.step_start_s / 60.0,
                "step start taken from": r.step_start_from,
                "come-up time [min]": _min(r.come_up_s),
                "start temperature [°C]": r.start_C,
                "slowest probe": r.slowest,
                "slowest probe's lethality F [min]": slow.F_min,
                "slowest probe's lag behind the medium [K·min]": slow.lag_K_min,
                "slowest across runs": _yes(r.name == study.slowest_run),
            }
        )
    return pd.DataFrame(rows)


def probes_table(study) -> pd.DataFrame:
    """One row per probe: where it sat, its measured lethality (by step too) and whether it meets the
    requirement."""
    rows = []
    for r in study.runs:
        for p in r.probes:
            rows.append(
                {
                    "run": r.name,
                    "probe": p.channel,
                    "piece": p.piece,
                    "position": POSITION_WORDS.get(p.position, p.position),
                    "slowest in its run": _yes(p.channel == r.slowest),
                    "slowest across runs": _yes(r.name == study.slowest_run and p.channel == study.slowest_channel),
                    "measured lethality F [min]": p.F_min,
                    "lethality F by plan step [min]": " + ".join(f"{f:.4g}" for f in p.F_by_step_min),
                    "meets the requirement": _yes(p.passed),
                    "lag behind the medium over the first step [K·min]": p.lag_K_min,
                }
            )  # fmt: skip
    return pd.DataFrame(rows)


def slowest_unit_table(study) -> pd.DataFrame:
    """The runs' slowest probes and, from two runs on, their statistics and the lower tolerance bound."""
    rows: list[tuple[str, object, str]] = [
        (f"lethality F of the slowest probe, {p.run} ({p.channel})", p.F_min, "min")
        for p in study.slowest_per_run()
    ]
    b = study.bound
    if b is None:
        rows.append(("tolerance bound", "none: it needs a lethality check and at least two runs", ""))
    else:
        rows += [
            ("runs", b.n, ""),
            ("mean lethality F", b.mean, "min"),
            ("standard deviation of F", b.sd, "min"),
            ("tolerance factor k", b.k, ""),
            ("proportion of units covered", b.proportion * 100.0, "%"),
            ("confidence", b.confidence * 100.0, "%"),
            ("distribution of F", b.model, ""),
            ("lower tolerance bound of F", b.lower, "min"),
            ("required lethality F", study.required_F_min, "min"),
        ]
    return pd.DataFrame(rows, columns=["quantity", "value", "unit"])


def _factor_cells(cf, kind: str) -> dict[str, object]:
    return {
        f"{kind} f [min]": None if cf is None else cf.f_min,
        f"{kind} j": None if cf is None else cf.j,
        f"{kind} medium [°C]": None if cf is None else cf.medium_C,
        f"{kind} pseudo-initial temperature [°C]": None if cf is None else cf.pseudo_initial_C,
        f"{kind} corrected zero [min]": None if cf is None else cf.zero_s / 60.0,
    }


def factors_table(study) -> pd.DataFrame:
    """One row per probe: heating and cooling f and j and the formula method's process time beside the
    general method's on the same heating curve (times from the step start)."""
    rows = []
    for p in study.probes:
        fm = p.formula
        rows.append(
            {
                "run": p.run,
                "probe": p.channel,
                **_factor_cells(p.heating, "heating"),
                **_factor_cells(p.cooling, "cooling"),
                "sterilising value at the medium, U [min]": None if fm is None else fm.u_min,
                "g at the end of heating [K]": None if fm is None else fm.g_K,
                "Ball's process time B [min]": None if fm is None else fm.b_min,
                "formula-method time from the step start [min]": None if fm is None else fm.from_start_min,
                "general-method time from the step start [min]": None if fm is None else fm.general_min,
                "formula against general method [%]": None if fm is None else fm.difference_percent,
            }
        )
    return pd.DataFrame(rows)


def residual_summary_table(study) -> pd.DataFrame:
    """One row per probe: how far the plan's prediction lies from the measurement."""
    rows = [
        {
            "run": p.run,
            "probe": p.channel,
            "position": POSITION_WORDS.get(p.position, p.position),
            "RMS residual [K]": p.rmse_K,
            "mean residual, measurement minus prediction [K]": p.bias_K,
            "largest residual either way [K]": p.max_abs_residual_K,
        }
        for p in study.probes
    ]
    return pd.DataFrame(rows)


def curves_table(study) -> pd.DataFrame:
    """Every reading of every probe from the step start: measured, predicted and the residual."""
    frames = []
    for p in study.probes:
        c = p.curve
        f = pd.DataFrame(
            {
                "run": p.run,
                "probe": p.channel,
                "time from the step start [min]": c["time_s"].to_numpy() / 60.0,
                "measured [°C]": c["measured_C"].to_numpy(),
            }
        )
        if "predicted_C" in c:
            f["predicted by the plan [°C]"] = c["predicted_C"].to_numpy()
            f["residual, measurement minus prediction [K]"] = c["residual_K"].to_numpy()
        frames.append(f)
    return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()


def trial_sheets(study) -> list[Sheet]:
    """The study's tables as workbook sheets."""
    sheets = [
        Sheet("Study", "what was judged, by which lethality, and the verdict", study_table(study)),
        Sheet("Runs", "alignment, come-up time and the slowest probe of each run", runs_table(study)),
        Sheet("Probes", "measured lethality of every probe", probes_table(study)),
        Sheet("Slowest unit", "the runs' slowest probes and the lower tolerance bound of their lethality", slowest_unit_table(study)),
        Sheet("Factors", "heating and cooling f and j; formula-method time beside the general method's", factors_table(study)),
    ]  # fmt: skip
    if any(p.rmse_K is not None for p in study.probes):
        sheets.append(Sheet("Residuals", "the plan's prediction against the measurement, per probe", residual_summary_table(study)))  # fmt: skip
    sheets.append(
        Sheet("Curves", "every reading from the step start, measured and predicted", curves_table(study))
    )
    return sheets


def trial_workbook(study) -> bytes:
    """The heat-penetration study as xlsx bytes."""
    return workbook_bytes(
        f"Heat-penetration study of {study.plan.title}", trial_sheets(study), study.all_notes()
    )
