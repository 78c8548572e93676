"""Session state of the app: the current plan (a plan dict in file units), display units, scenarios.

The plan dict is the one source of truth; widgets are views of it. Each widget's key carries the plan
revision (bumped whenever the plan is replaced from outside, e.g. an upload or a library pick) so that
the widgets re-read the plan instead of keeping stale values.
"""

from __future__ import annotations

import base64
import binascii
import copy
import zlib
from typing import Any

import streamlit as st

from procplan.ui import adapter
from procplan.ui.fmt import Units

PLAN = "plan"
REV = "plan_rev"
GOOD = "last_good_toml"
SCENARIOS = "scenarios"
LIBGEN = "library_generation"
NOTICE = "notice"
#: The title the app last put in the plan (demo, upload, library pick); a title still equal to it, or
#: empty, or the default for the current product, was not written by the user and follows the product.
AUTO_TITLE = "auto_title"
#: The query parameter that carries the plan in progress: its TOML text, deflated and base64url-encoded
#: (text only, never pickled; validated like an uploaded plan file when it is read back).
PLAN_PARAM = "plan"
MAX_PLAN_BYTES = 200_000


def encode_plan(text: str) -> str:
    """Plan TOML text → a compact, URL-safe string."""
    return base64.urlsafe_b64encode(zlib.compress(text.encode("utf-8"), 9)).decode("ascii").rstrip("=")


def decode_plan(token: str) -> str | None:
    """The TOML text of :func:`encode_plan`, or None when the token is not one (or inflates too far)."""
    try:
        raw = base64.urlsafe_b64decode(token + "=" * (-len(token) % 4))
        inflater = zlib.decompressobj()
        data = inflater.decompress(raw, MAX_PLAN_BYTES)
        if inflater.unconsumed_tail:
            return None
        return data.decode("utf-8")
    except (binascii.Error, zlib.error, UnicodeDecodeError, ValueError):
        return None


def _plan_from_address(generation: int) -> dict | None:
    """The plan carried in the page address (a reload keeps the work), or None."""
    token = st.query_params.get(PLAN_PARAM)
    if not token:
        return None
    text = decode_plan(str(token))
    out = None if text is None else adapter.read_uploaded_plan(text, "the page address", generation)
    if out is None or not out.ok:
        st.session_state[NOTICE] = "The plan in the page address could not be read; the demo plan is shown."
        return None
    return out.value


def remember() -> None:
    """Write the plan in progress into the page address (only when it changed)."""
    token = encode_plan(adapter.plan_toml(plan()))
    if st.query_params.get(PLAN_PARAM) != token:
        st.query_params[PLAN_PARAM] = token


def init() -> None:
    """Make sure the session holds a plan (the demo plan on the first visit)."""
    ss = st.session_state
    ss.setdefault(LIBGEN, 0)
    ss.setdefault(REV, 0)
    ss.setdefault(SCENARIOS, [])
    ss.setdefault("temperature_unit", "°C")
    ss.setdefault("time_unit", "min")
    if PLAN not in ss:
        ss[PLAN] = _plan_from_address(ss[LIBGEN]) or adapter.demo_plan_dict(ss[LIBGEN])
        ss[AUTO_TITLE] = ss[PLAN].get("title", "")
        ss[GOOD] = adapter.canonical_toml(adapter.parse_plan(adapter.plan_toml(ss[PLAN]), ss[LIBGEN]).value)


def plan() -> dict:
    return st.session_state[PLAN]


def generation() -> int:
    """The library's generation: bumped by every save in this server process, so that every session (a
    reload of the page included) reads the library as saved, not a cached older one."""
    return max(int(st.session_state.get(LIBGEN, 0)), adapter.saved_generation())


def reload_library() -> None:
    st.session_state[LIBGEN] = adapter.library_saved(generation())


def replace_plan(new_plan: dict, notice: str | None = None) -> None:
    """Replace the whole plan (upload, library pick, reset) and let every widget re-read it."""
    st.session_state[PLAN] = copy.deepcopy(new_plan)
    st.session_state[AUTO_TITLE] = new_plan.get("title", "")
    st.session_state[REV] = int(st.session_state.get(REV, 0)) + 1
    if notice:
        st.session_state[NOTICE] = notice


def default_title(plan_dict: dict) -> str:
    """ "<product> in <machine>" (machines of the steps in order, each once), or the product alone."""
    product = plan_dict.get("product", {})
    name = product.get("library") or product.get("name") or "product"
    machines: list[str] = []
    for step in plan_dict.get("steps", []):
        m = step.get("equipment")
        if m and m not in machines:
            machines.append(m)
    return f"{name} in {' then '.join(machines)}" if machines else str(name)


def switch_product(product: dict, notice: str | None = None) -> None:
    """Put another product in the plan; a title the user did not write follows the new product."""
    new = copy.deepcopy(plan())
    title = str(new.get("title", "")).strip()
    automatic = title in ("", st.session_state.get(AUTO_TITLE, ""), default_title(new))
    new["product"] = product
    if automatic:
        new["title"] = default_title(new)
    replace_plan(new, notice)


def touch() -> None:
    """Structural change inside the plan (a step added or moved): widgets must re-read it."""
    st.session_state[REV] = int(st.session_state.get(REV, 0)) + 1


def key(*parts: Any) -> str:
    """A widget key tied to the plan revision and the display units."""
    u = units()
    return ":".join(str(p) for p in (st.session_state.get(REV, 0), u.temperature, u.time, *parts))


def units() -> Units:
    return Units(st.session_state.get("temperature_unit", "°C"), st.session_state.get("time_unit", "min"))


def current() -> tuple[str, adapter.Outcome]:
    """The current plan's TOML text and its validation outcome; remembers the last valid text."""
    text = adapter.plan_toml(plan())
    parsed = adapter.parse_plan(text, generation())
    if parsed.ok:
        text = adapter.canonical_toml(parsed.value)
        st.session_state[GOOD] = text
    return text, parsed


def last_good() -> str:
    return st.session_state.get(GOOD) or adapter.plan_toml(adapter.demo_plan_dict(generation()))
