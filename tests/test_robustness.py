"""Generated inputs: every plan, product, equipment, rule, site and logger file either loads or is refused by name.

The demo library's own files are mutated (keys dropped, values swapped for lists, tables, huge, negative,
NaN or infinite numbers, text, deep nesting, unknown keys added) and random CSV text is fed to the logger
reader. Each input must either succeed or raise :class:`procplan.errors.InvalidInputError` (or its
:class:`ValidationErrors`) whose every problem names a field; any other exception is a crash. Plans are
validated, not run (running is for the hand-picked plans in tests/test_cli_robust.py).

The example counts per test add up to over 2,000 generated inputs; under CI hypothesis runs derandomized
(tests/conftest.py), so a failure there reproduces locally.
"""

from __future__ import annotations

import copy
import math
from collections import Counter
from collections.abc import Callable
from typing import Any

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from procplan.errors import InvalidInputError, ValidationErrors
from procplan.files.library import DEMO_LIBRARY, load_library
from procplan.files.machines import equipment_from_dict
from procplan.files.plan import plan_from_dict
from procplan.files.product import product_from_dict
from procplan.files.rules import rule_from_dict
from procplan.files.site import site_from_dict
from procplan.files.tomlfile import dump_toml, parse_toml, read_toml

LIB = load_library()
#: Outcomes of the generated inputs of this run: "ok", "refused" (a named InvalidInputError); printed with -s.
TALLY: Counter[str] = Counter()


def _fast(n: int) -> settings:
    """``n`` examples, no per-example deadline (the machine may be loaded), the active profile otherwise."""
    return settings(
        max_examples=n,
        deadline=None,
        suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
    )


@pytest.fixture(scope="module", autouse=True)
def _report_tally():
    yield
    print(f"\ngenerated inputs: {sum(TALLY.values())} ({dict(TALLY)})")


def _demo(kind: str) -> list[dict[str, Any]]:
    if kind == "site":
        return [read_toml(DEMO_LIBRARY / "site.toml")]
    key = {"products": "name", "equipment": "id", "rules": "name"}.get(kind)
    out = []
    for f in sorted((DEMO_LIBRARY / kind).glob("*.toml")):
        data = read_toml(f)
        if key:
            data.setdefault(key, f.stem)
        out.append(data)
    return out


DEMO = {kind: _demo(kind) for kind in ("plans", "products", "equipment", "rules", "site")}

# --- what a file may hold instead of the expected value -------------------------------------------------------
_scalars = st.one_of(
    st.integers(min_value=-(2**63), max_value=2**63 - 1),
    st.sampled_from([0, -1, 1, 10**18, -(10**18)]),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([math.nan, math.inf, -math.inf, 1e308, -1e308, 5e-324, 0.0, -0.0, 1e-6]),
    st.text(max_size=12),
    st.sampled_from(["", "slab", "x", "air_C", "chiller-b2", "../x", "nan", "-1"]),
    st.booleans(),
)


def _nested(depth: int) -> Any:
    value: Any = 1
    for i in range(depth):
        value = [value] if i % 2 else {"a": value}
    return value


_values = st.one_of(
    _scalars,
    st.lists(_scalars, max_size=4),
    st.dictionaries(st.sampled_from(["a", "name", "air_C", "temperature_C"]), _scalars, max_size=3),
    st.integers(min_value=2, max_value=60).map(_nested),
)


def _paths(obj: Any, prefix: tuple = ()) -> list[tuple]:
    """Every key path inside ``obj`` (the root excluded)."""
    out = []
    items = obj.items() if isinstance(obj, dict) else enumerate(obj) if isinstance(obj, list) else ()
    for k, v in items:
        out.append(prefix + (k,))
        out.extend(_paths(v, prefix + (k,)))
    return out


def _parent(obj: Any, path: tuple) -> Any:
    for k in path[:-1]:
        obj = obj[k]
    return obj


@st.composite
def mutated(draw, kind: str) -> dict[str, Any]:
    """A demo file of ``kind`` with one to four mutations."""
    data = copy.deepcopy(draw(st.sampled_from(DEMO[kind])))
    for _ in range(draw(st.integers(min_value=1, max_value=4))):
        paths = _paths(data)
        op = draw(st.sampled_from(["drop", "replace", "replace", "add"]))
        if op == "add" or not paths:
            targets = [()] + [p for p in paths if isinstance(_parent(data, p + ("",)), dict)]
            where = draw(st.sampled_from(targets))
            table = _parent(data, where + ("",))
            table[draw(st.sampled_from(["extra", "name", "shape", "settings", "a b"]))] = draw(_values)
            continue
        path = draw(st.sampled_from(paths))
        parent = _parent(data, path)
        if op == "drop":
            del parent[path[-1]]
        else:
            parent[path[-1]] = draw(_values)
    return data


def _named(exc: InvalidInputError) -> bool:
    problems = exc.problems if isinstance(exc, ValidationErrors) else [exc]
    return bool(problems) and all(isinstance(p.field, str) and p.field.strip() for p in problems)


def _loads_or_names_the_field(fn: Callable[[dict], Any], data: dict) -> None:
    try:
        fn(data)
    except InvalidInputError as exc:
        assert _named(exc), f"an error without a field: {exc!r}"
        TALLY["refused"] += 1
    else:
        TALLY["ok"] += 1


def _as_file(data: dict) -> dict:
    """``data`` written to TOML and read back, as the loaders see it (as is when TOML cannot hold it)."""
    try:
        return parse_toml(dump_toml(data), "mutated.toml")
    except (InvalidInputError, TypeError, ValueError, OverflowError, RecursionError):
        return data


@_fast(700)
@given(mutated("plans"))
def test_mutated_plans_load_or_name_the_field(data):
    _loads_or_names_the_field(lambda d: plan_from_dict(_as_file(d), "plan.toml", library=LIB), data)


@_fast(450)
@given(mutated("products"))
def test_mutated_products_load_or_name_the_field(data):
    _loads_or_names_the_field(lambda d: product_from_dict(d, "product.toml", prefix=""), data)


@_fast(350)
@given(mutated("equipment"))
def test_mutated_equipment_loads_or_names_the_field(data):
    _loads_or_names_the_field(lambda d: equipment_from_dict(d, "equipment.toml"), data)


@_fast(300)
@given(mutated("rules"))
def test_mutated_rules_load_or_name_the_field(data):
    _loads_or_names_the_field(lambda d: rule_from_dict(d, "rule.toml"), data)


@_fast(250)
@given(mutated("site"))
def test_mutated_site_loads_or_names_the_field(data):
    _loads_or_names_the_field(lambda d: site_from_dict(d, "site.toml", library=LIB), data)


@_fast(150)
@given(st.sampled_from(["products", "plans", "equipment"]), st.integers(min_value=50, max_value=3000))
def test_deeply_nested_toml_is_refused_by_name(kind, depth):
    text = "x = " + "[" * depth + "]" * depth + "\n"
    _loads_or_names_the_field(lambda t: parse_toml(t, f"{kind}/deep.toml"), text)


# --- logger files ------------------------------------------------------------------------------------------------
_cells = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-(10**6), 10**6).map(str),
    st.sampled_from(
        ["", "time", "t_s", "core", "°C", "NaN", "--", "12:00:01", "2026-01-02 03:04", "1,5", '"']
    ),
    st.text(max_size=6),
)


@st.composite
def logger_text(draw) -> str:
    """CSV-like text: a header and rows joined by an odd or usual separator, or plain garbage."""
    if draw(st.integers(0, 9)) == 0:
        return draw(st.text(max_size=200))
    sep = draw(st.sampled_from([",", ";", "\t", "|", " ", ",,", ""]))
    n_cols = draw(st.integers(1, 4))
    rows = draw(st.lists(st.lists(_cells, min_size=n_cols, max_size=n_cols), min_size=0, max_size=8))
    header = draw(st.sampled_from([["time_s", "core_C"], ["Time", "T1", "T2"], [], ["a"] * n_cols]))
    lines = [sep.join(header)] if header else []
    lines += [sep.join(r) for r in rows]
    return draw(st.sampled_from(["\n", "\r\n", "\r"])).join(lines)


@_fast(300)
@given(logger_text())
def test_logger_text_reads_or_names_the_field(text):
    from procplan.studies.logger import read_logger

    _loads_or_names_the_field(read_logger, text.encode("utf-8", "surrogatepass"))


@pytest.mark.parametrize("kind", ["plans", "products", "equipment", "rules"])
def test_the_demo_files_themselves_load(kind):
    loader = {
        "plans": lambda d: plan_from_dict(d, "plan.toml", library=LIB),
        "products": lambda d: product_from_dict(d, "product.toml", prefix=""),
        "equipment": lambda d: equipment_from_dict(d, "equipment.toml"),
        "rules": lambda d: rule_from_dict(d, "rule.toml"),
    }[kind]
    for data in DEMO[kind]:
        loader(copy.deepcopy(data))
