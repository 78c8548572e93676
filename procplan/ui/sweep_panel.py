"""The catalogue sweep on the Compare & studies page: every chosen product in every chosen suitable machine,
with a progress bar and a stop (procplan.ui.study_progress), the table kept for the session."""

from __future__ import annotations

import streamlit as st

from procplan.ui import adapter, adapter_outputs, state, study_progress, widgets
from procplan.ui.studies_panels import sweep_view


def catalogue_sweep() -> None:
    st.subheader("Catalogue sweep")
    st.caption(
        "Every chosen product in every chosen suitable machine, each with its machine kind's task "
        "(chillers 74 → 5 °C under the two-stage cooling rule, freezers to −18 °C, ovens and baths to a cooked core)."
    )
    lib = adapter.library(state.generation())
    c1, c2 = st.columns(2)
    with c1:
        products = st.multiselect(
            "Products", sorted(lib.products), default=sorted(lib.products)[:3], key="sw_products"
        )
    with c2:
        machines = st.multiselect("Machines", sorted(lib.equipment), default=sorted(lib.equipment)[:3],
                                  key="sw_machines", format_func=lambda e: lib.equipment[e].name)  # fmt: skip
    go = st.button("Run the sweep", key="sw_go", disabled=not (products and machines))
    req = study_progress.request("sw", (tuple(products), tuple(machines), state.generation()) if go else None)
    if req is None:
        return
    out = study_progress.run_kept(
        "sw",
        req,
        lambda progress: adapter.sweep(req[0], req[1], generation=req[2], progress=progress),
        what="runs",
        stop_label="Stop the sweep",
        stopped_text="The sweep was stopped. Change the choice or run it again.",
    )
    if out is None:
        return
    if not out.ok:
        widgets.problems(out.problems, "The sweep could not run:")
        return
    table, skipped = out.value
    if (req[0], req[1]) != (tuple(products), tuple(machines)):
        st.caption(
            "The table is of the last sweep run; run the sweep again for the products and machines chosen now."
        )
    frame, config = sweep_view(table, state.units())
    if "Machine" in frame.columns:  # the machine's name, as in the choice above (the CSV keeps the file name)
        frame["Machine"] = frame["Machine"].map(lambda e: lib.equipment[e].name if e in lib.equipment else e)
    st.dataframe(frame, hide_index=True, width="stretch", column_config=config)
    if skipped:
        st.caption("Machines without a sweep task, skipped: " + ", ".join(skipped))
    st.download_button(
        "Download the sweep (CSV)",
        table.to_csv(index=False).encode("utf-8"),
        "sweep.csv",
        "text/csv",
        key="sw_csv",
    )
    adapter_outputs.xlsx_button("Download the sweep (Excel)", lambda: adapter_outputs.sweep_xlsx(table, skipped), "sweep", "sw_xlsx")  # fmt: skip
