"""The app's frame: one address per page (st.navigation), display units in the sidebar, the standing
caution on every page, and the plan in progress kept in the page address so that a reload keeps it."""

from __future__ import annotations

from pathlib import Path

import streamlit as st

from procplan.ui import state, widgets
from procplan.ui.charts import IMAGE_FORMATS
from procplan.ui.fmt import TEMPERATURE_UNITS, TIME_UNITS

PAGE_DIR = Path(__file__).resolve().parent / "pages"
#: (title, script in procplan/ui/pages, address, icon); the Result page opens first.
PAGES = (
    ("Product", "product.py", "product", ":material/inventory_2:"),
    ("Process", "process.py", "process", ":material/tune:"),
    ("Result", "result.py", "result", ":material/monitoring:"),
    ("Compare & studies", "studies.py", "studies", ":material/compare_arrows:"),
    ("Sheet & files", "files.py", "files", ":material/description:"),
    ("Library", "library.py", "library", ":material/menu_book:"),
    ("Site", "site.py", "site", ":material/factory:"),
)
DEFAULT_PAGE = "Result"


def _navigation():
    pages = [
        st.Page(
            str(PAGE_DIR / script),
            title=title,
            url_path=address,
            icon=icon,
            default=title == DEFAULT_PAGE,
        )
        for title, script, address, icon in PAGES
    ]
    return st.navigation(pages, position="sidebar")


def _sidebar() -> None:
    with st.sidebar:
        st.caption("Thermal-process planning: chill, freeze, cook, pasteurise")
        st.radio("Temperatures in", TEMPERATURE_UNITS, horizontal=True, key="temperature_unit")
        st.radio("Times in", TIME_UNITS, horizontal=True, key="time_unit")
        st.radio(
            "Charts download as",
            list(IMAGE_FORMATS),
            horizontal=True,
            key="chart_format",
            help="The camera button at the top right of each chart saves it in this format.",
        )
        st.divider()
        plan = state.plan()
        st.caption(f"Current plan: **{plan.get('title', 'untitled')}**")
        st.caption(
            f"Product: {plan.get('product', {}).get('name', '?')} · {len(plan.get('steps', []))} step(s)"
        )


def _run_page(page) -> None:
    try:
        page.run()
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


def main() -> None:
    st.set_page_config(page_title="procplan", page_icon="🌡️", layout="wide")
    page = _navigation()
    try:
        state.init()
    except Exception as exc:  # noqa: BLE001 - the library folder itself is unusable; say so, no traceback
        st.error(f"The product library could not be opened: {exc}")
        widgets.caution()
        return
    _sidebar()
    widgets.caution()
    notice = st.session_state.pop(state.NOTICE, None)
    if notice:
        st.success(notice)
    _run_page(page)
    state.remember()
