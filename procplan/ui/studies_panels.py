"""Study panels of the Compare & studies page; each one uses procplan.studies when this build has it."""

from __future__ import annotations

import streamlit as st

from procplan.ui import adapter
from procplan.ui.fmt import Units

NOT_AVAILABLE = "not available in this build"


def _missing(title: str, module: str) -> None:
    st.subheader(title)
    st.info(f"{title}: {NOT_AVAILABLE} (needs procplan.studies.{module}).", icon="🧩")


def required_setting(text: str, u: Units) -> None:
    mod = adapter.studies_module("inverse")
    if mod is None:
        _missing("Required setting", "inverse")
        return


def variability(text: str, u: Units) -> None:
    mod = adapter.studies_module("variability")
    if mod is None:
        _missing("Variability", "variability")
        return


def logger(text: str, u: Units) -> None:
    mod = adapter.studies_module("calibrate")
    if mod is None:
        _missing("Logger data and calibration", "calibrate")
        return
