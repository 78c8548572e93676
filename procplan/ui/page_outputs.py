"""Outputs page: batch-plan sheet (PDF), plan file (TOML), history (CSV); open a plan to continue work."""

from __future__ import annotations

import re

import streamlit as st

from procplan.ui import adapter, adapter_outputs, state, widgets


def _slug(title: str) -> str:
    s = re.sub(r"[^a-z0-9]+", "-", title.lower()).strip("-")
    return s[:60] or "plan"


def _downloads(text: str, ok: bool) -> None:
    st.subheader("Download")
    name = _slug(state.plan().get("title", "plan"))
    c1, c2, c3 = st.columns(3)
    with c1:
        st.markdown("**Batch-plan sheet (PDF)**")
        if not ok:
            st.caption("Correct the plan's inputs first.")
        else:
            site = adapter.site_settings(state.generation())
            papers = ["a4", "letter"]
            default_paper = site.value.paper if site.ok and site.value.paper in papers else "a4"
            lot = st.text_input("Lot", value="", key="sheet_lot", max_chars=40)
            rev = st.text_input("Revision", value="A", key="sheet_rev", max_chars=12)
            who = st.text_input("Prepared by", value="", key="sheet_by", max_chars=60)
            paper = st.radio(
                "Paper",
                papers,
                index=papers.index(default_paper),
                horizontal=True,
                key="sheet_paper",
                format_func={"a4": "A4", "letter": "US Letter"}.get,
            )
            u = state.units()
            out = adapter.sheet_pdf(
                text,
                state.generation(),
                lot_id=lot,
                revision=rev,
                paper=paper,
                prepared_by=who,
                temperature_unit="F" if u.fahrenheit else "C",
                time_unit=u.time,
            )
            if out.ok:
                st.download_button(
                    "Download the batch-plan sheet",
                    out.value,
                    file_name=f"{name}.pdf",
                    mime="application/pdf",
                    key="dl_sheet",
                )
            else:
                widgets.problems(out.problems, "The sheet could not be made:")
    with c2:
        st.markdown("**Plan file (TOML)**")
        st.download_button(
            "Download the plan file",
            text.encode("utf-8"),
            file_name=f"{name}.toml",
            mime="application/toml",
            key="dl_plan",
        )
        if not ok:
            st.caption(
                "The plan has invalid input; the file holds it as entered so you can correct it later."
            )
    with c3:
        st.markdown("**History (CSV)**")
        if ok:
            st.download_button(
                "Download the history",
                adapter.history_csv(
                    text, state.generation(), "F" if state.units().fahrenheit else "C", state.units().time
                ),
                file_name=f"{name}-history.csv",
                mime="text/csv",
                key="dl_csv",
            )
        else:
            st.caption("Correct the plan's inputs first.")
    _records(text, ok, name)


def _records(text: str, ok: bool, name: str) -> None:
    """The workbook and the result JSON for the plant's records (LIMS, MES)."""
    c1, c2 = st.columns(2)
    u = state.units()
    with c1:
        st.markdown("**Workbook (Excel)**")
        st.caption("Key figures and the history, one sheet each, the unit in every header.")
        if ok:
            st.download_button(
                "Download the workbook",
                adapter_outputs.run_xlsx(text, state.generation(), "F" if u.fahrenheit else "C", u.time),
                file_name=f"{name}.xlsx",
                mime=adapter_outputs.XLSX_MIME,
                key="dl_xlsx",
            )
        else:
            st.caption("Correct the plan's inputs first.")
    with c2:
        st.markdown("**Result for LIMS or MES (JSON)**")
        st.caption("Every figure of the run in SI units with °C, described by a versioned JSON Schema.")
        if ok:
            b1, b2 = st.columns(2)
            b1.download_button(
                "Download the result",
                adapter_outputs.result_json(text, state.generation()),
                file_name=f"{name}-result.json",
                mime="application/json",
                key="dl_json",
            )
            b2.download_button(
                "Download the schema",
                adapter_outputs.result_schema_json(),
                file_name="procplan-result.schema.json",
                mime="application/schema+json",
                key="dl_schema",
            )
        else:
            st.caption("Correct the plan's inputs first.")


def load_text(text: str, source: str) -> bool:
    """Validate plan text and make it the current plan; show every problem by field otherwise."""
    out = adapter.read_uploaded_plan(text, source, state.generation())
    if out.ok:
        state.replace_plan(out.value, f"Opened plan '{out.value.get('title', source)}' from {source}.")
        return True
    widgets.problems(out.problems, f"{source} was not opened; the current plan is unchanged. Problems:")
    return False


def _open() -> None:
    st.subheader("Continue work on a plan")
    lib = adapter.library(state.generation())
    c1, c2 = st.columns([3, 1], vertical_alignment="bottom")
    names = sorted(lib.plans)
    pick = c1.selectbox("Plan from the library", names, key="open_lib_plan")
    if c2.button("Open this plan", key="open_lib_btn"):
        state.replace_plan(
            adapter.library_plan_dict(pick, state.generation()), f"Opened library plan '{pick}'."
        )
        st.rerun()
    up = st.file_uploader("Upload a plan file (.toml)", type=["toml"], key="upload_plan")
    if up is not None:
        marker = (up.name, up.size)
        if st.session_state.get("upload_done") != marker:
            try:
                text = up.getvalue().decode("utf-8")
            except UnicodeDecodeError:
                widgets.problems(
                    [adapter.Problem(up.name, "not UTF-8 text", "a UTF-8 TOML plan file", None)],
                    "Not opened:",
                )
                return
            if load_text(text, up.name):
                st.session_state["upload_done"] = marker
                st.rerun()
    with st.expander("…or paste plan text"):
        pasted = st.text_area("Plan file text (TOML)", key="paste_plan", height=200)
        if st.button("Open the pasted plan", key="paste_btn") and pasted.strip():
            if load_text(pasted, "pasted text"):
                st.rerun()
    if st.button("Back to the demo plan", key="reset_demo"):
        state.replace_plan(adapter.demo_plan_dict(state.generation()), "Demo plan restored.")
        st.rerun()


def render() -> None:
    st.header("Sheet & files")
    text, parsed = state.current()
    if not parsed.ok:
        widgets.problems(parsed.problems, "The current plan has invalid input:")
    _downloads(text, parsed.ok)
    st.divider()
    _open()
