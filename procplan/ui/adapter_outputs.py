"""Downloads of the app: Excel workbooks and the result JSON, made by procplan.output from results the
adapter already holds (nothing is computed here)."""

from __future__ import annotations

import json

import pandas as pd
import streamlit as st

from procplan.ui import adapter

XLSX_MIME = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"
#: Streamlit makes a download's file only when it is clicked when given a function (newer releases).
DEFERRED = "callable" in (st.download_button.__doc__ or "").split("file_name", 1)[0]


def deferred(make):
    """The download's data: made on the click where Streamlit allows it, else now."""
    return make if DEFERRED else make()


@st.cache_data(max_entries=16, show_spinner="Preparing the workbook…")
def run_xlsx(text: str, generation: int = 0, temperature_unit: str = "C", time_unit: str = "min") -> bytes:
    """The run's workbook (key figures and history) in the display units the user chose."""
    from procplan.output.xlsx import run_workbook

    out = adapter.run(text, generation)
    return run_workbook(out.value, temperature_unit, time_unit) if out.ok else b""


@st.cache_data(max_entries=16, show_spinner=False)
def result_json(text: str, generation: int = 0) -> bytes:
    """The run as the versioned result JSON (procplan.output.result_schema)."""
    from procplan.output.json_safe import json_safe
    from procplan.output.result_schema import result_document

    out = adapter.run(text, generation)
    if not out.ok:
        return b""
    return json.dumps(json_safe(result_document(out.value)), ensure_ascii=False).encode("utf-8")


def result_schema_json() -> bytes:
    from procplan.output.result_schema import schema_text

    return schema_text().encode("utf-8")


def differences(texts: tuple[str, ...], names: tuple[str, ...], generation: int = 0) -> pd.DataFrame:
    """The inputs that differ between the scenarios (procplan.studies.compare.plan_differences)."""
    from procplan.studies.compare import plan_differences

    plans = []
    for t in texts:
        parsed = adapter.parse_plan(t, generation)
        if not parsed.ok:
            return pd.DataFrame()
        plans.append(parsed.value)
    return plan_differences(plans, list(names))


def comparison_xlsx(comparison, diff: pd.DataFrame) -> bytes:
    from procplan.output.xlsx import comparison_workbook

    return comparison_workbook(comparison, diff)


def comparison_csv(comparison) -> bytes:
    from procplan.output.xlsx import readable

    return readable(comparison.table).to_csv(index=False).encode("utf-8")


def sweep_xlsx(table: pd.DataFrame, skipped) -> bytes:
    from procplan.output.xlsx import sweep_workbook

    return sweep_workbook(table, skipped)


def variability_xlsx(res) -> bytes:
    from procplan.output.xlsx import variability_workbook

    return variability_workbook(res)


def calibration_xlsx(cal) -> bytes:
    from procplan.output.xlsx import calibration_workbook

    return calibration_workbook(cal)


def trial_xlsx(study) -> bytes:
    """The heat-penetration study's workbook (procplan.studies.trial_workbook)."""
    from procplan.studies.trial_workbook import trial_workbook

    return trial_workbook(study)


def trial_json(study) -> bytes:
    """The heat-penetration study as JSON (the same document as ``procplan trial --json``)."""
    from procplan.caution import CAUTION

    return json.dumps({**study.to_dict(), "caution": CAUTION}, ensure_ascii=False).encode("utf-8")


def xlsx_button(label: str, make, name: str, key: str) -> None:
    """A download button for a workbook made by ``make()`` (on the click where Streamlit allows it)."""
    st.download_button(label, deferred(make), file_name=f"{name}.xlsx", mime=XLSX_MIME, key=key)
