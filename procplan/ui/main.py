"""The app's frame: page choice and display units in the sidebar, the standing caution on every page."""

from __future__ import annotations

import streamlit as st

from procplan.ui import page_outputs, page_process, page_product, page_result, page_studies, state, widgets
from procplan.ui.fmt import TEMPERATURE_UNITS, TIME_UNITS

PAGES = {
    "Product": page_product.render,
    "Process": page_process.render,
    "Result": page_result.render,
    "Compare & studies": page_studies.render,
    "Sheet & files": page_outputs.render,
}
DEFAULT_PAGE = "Result"


def _sidebar() -> str:
    with st.sidebar:
        st.title("procplan")
        st.caption("Thermal-process planning: chill, freeze, cook, pasteurise")
        page = st.radio("Page", list(PAGES), index=list(PAGES).index(DEFAULT_PAGE), key="page")
        st.divider()
        st.radio("Temperatures in", TEMPERATURE_UNITS, horizontal=True, key="temperature_unit")
        st.radio("Times in", TIME_UNITS, horizontal=True, key="time_unit")
        st.divider()
        plan = state.plan()
        st.caption(f"Current plan: **{plan.get('title', 'untitled')}**")
        st.caption(
            f"Product: {plan.get('product', {}).get('name', '?')} · {len(plan.get('steps', []))} step(s)"
        )
    return page


def main() -> None:
    st.set_page_config(page_title="procplan", page_icon="🌡️", layout="wide")
    try:
        state.init()
    except Exception as exc:  # noqa: BLE001 - the library folder itself is unusable; say so, no traceback
        st.error(f"The product library could not be opened: {exc}")
        widgets.caution()
        return
    page = _sidebar()
    widgets.caution()
    notice = st.session_state.pop(state.NOTICE, None)
    if notice:
        st.success(notice)
    try:
        PAGES[page]()
    except Exception as exc:  # noqa: BLE001 - never a traceback in front of the user
        from procplan.errors import InvalidInputError

        if isinstance(exc, InvalidInputError):
            st.error(f"Invalid input: {exc}", icon=":material/error:")
        else:
            st.error(
                f"Something went wrong on this page ({type(exc).__name__}: {exc}). Your plan is kept; "
                "download it from 'Sheet & files' and report the problem.",
                icon=":material/report:",
            )
