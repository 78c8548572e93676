"""Progress and stop for the long studies of the app (variability, catalogue sweep): one request kept in the
session, a progress bar while it runs, a stop button, and the result kept so that other widgets do not run it
again.

How the stop works: a click on the stop button reruns the page, which ends the running study at its next
progress report; the rerun then finds the stop and drops the request, so the page stays usable and the study
runs again only when asked.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import streamlit as st


def request(name: str, value: Any = None) -> Any:
    """Store ``value`` as the study's request (when given) and return the one kept in the session (or None)."""
    if value is not None:
        st.session_state[f"{name}_request"] = value
    return st.session_state.get(f"{name}_request")


def run_kept(
    name: str,
    req: Any,
    run: Callable[[Callable[[int, int], None]], Any],
    *,
    what: str,
    stop_label: str,
    stopped_text: str,
) -> Any:
    """The result of ``run(progress)`` for the request ``req``: kept in the session under ``{name}_result`` while
    the request is the same; while it runs, a progress bar ("3 of 12 ``what``") and a stop button
    (key ``{name}_stop``), both gone once the study ends. Returns None when the study was stopped."""
    kept = st.session_state.get(f"{name}_result")
    if kept is not None and kept[0] == req:
        return kept[1]
    stop_slot = st.empty()
    if stop_slot.button(stop_label, key=f"{name}_stop"):
        stop_slot.empty()
        st.session_state.pop(f"{name}_request", None)
        st.info(stopped_text)
        return None
    bar = st.progress(0.0, text="Starting…")

    def progress(done: int, total: int) -> None:
        bar.progress(done / max(total, 1), text=f"{done} of {total} {what}")

    out = run(progress)
    bar.empty()
    stop_slot.empty()
    st.session_state[f"{name}_result"] = (req, out)
    return out
