"""Logger files: formats, units, mapping, cleaning, and the guarantee that bad input raises only
InvalidInputError (fuzzed with hypothesis)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.studies.logger import MAX_BYTES, ColumnMapping, clean_logger, preview_logger, read_logger


def test_seconds_minutes_timestamps_and_fahrenheit():
    d = read_logger("elapsed (s),T1,T2\n0,70.0,69.5\n30,69.0,68.0\n60,68.2,67.1\n")
    assert d.channels == ("T1", "T2")
    assert_allclose(d.frame["time_s"], [0, 30, 60])
    d = read_logger("Zeit [min]\tKern\n0\t74,5\n2,5\t70,25\n")
    assert_allclose(d.frame["time_s"], [0, 150])
    assert_allclose(d.frame["Kern"], [74.5, 70.25])
    d = read_logger("Date Time;Probe\n2024-03-01 10:00:00;20.0\n2024-03-01 10:01:30;19.0\n")
    assert d.mapping.time_unit == "timestamp"
    assert_allclose(d.frame["time_s"], [0, 90])
    # Source: definition of the degree Fahrenheit, T_C = (T_F - 32) * 5/9 (NIST SP 811, B.8): 212 F = 100 C.
    d = read_logger("time_min,core (°F)\n0,212\n1,32\n")
    assert_allclose(d.frame["core (°F)"], [100.0, 0.0], atol=1e-12)


def test_preamble_bom_cp1252_and_explicit_mapping():
    text = "Logger XY-12 serial 0042\nstart 2024-03-01\ntime_s;a;b\n0;1,5;2\n10;1,0;2,5\n"
    pv = preview_logger(text.encode("utf-8-sig"))
    assert pv.header and pv.separator == ";" and pv.decimal == "," and pv.mapping.channels == ("a", "b")
    assert pv.rows.shape == (2, 3)
    d = read_logger(("time_s;Température\n0;3,5\n5;3,0\n").encode("cp1252"))
    assert d.channels == ("Température",)
    m = ColumnMapping("time_s", "min", ("b",), "C")
    d = read_logger(text, m)
    assert d.channels == ("b",) and d.frame["time_s"].tolist() == [0.0, 600.0]
    with pytest.raises(InvalidInputError, match="mapping.channels"):
        read_logger(text, ColumnMapping("time_s", "s", ("zz",)))


def test_clean_sorts_drops_and_flags():
    d = read_logger("t_s,a,b\n0,10,11\n120,8,\n60,9,10\n60,9.1,10\n180,,\n240,7,20\n")
    c = clean_logger(d, jump_K=5.0)
    assert c.frame["time_s"].tolist() == [0.0, 60.0, 120.0, 240.0]
    assert c.jumps["b"] == (240.0,) and c.jumps["a"] == ()
    assert any("dropped" in f for f in c.flags)
    t, v = c.series("b")
    assert t.tolist() == [0.0, 60.0, 240.0]


@pytest.mark.parametrize(
    "bad",
    [
        b"",
        b"\n\n",
        b"just one column\n1\n2\n",
        b"time,a\nx,y\nz,w\n",
        b"time,a\n",
        b"\x00\x01\x02\x03binary,\x00\n",
        b"\x81\x8d\x8f\x90,\x9d\n1,2\n",
        b"time,a\n0,1e400\n1,2\n",
        b"time,a\n0,5000\n1,2\n",
    ],
)
def test_malformed_input_raises_invalid_input(bad):
    with pytest.raises(InvalidInputError):
        read_logger(bad)


def test_huge_input_refused_without_parsing():
    with pytest.raises(InvalidInputError, match="MB"):
        read_logger(b"0,1\n" * (MAX_BYTES // 4 + 1))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.binary(max_size=400))
def test_fuzz_bytes_only_invalid_input(data):
    try:
        d = read_logger(data)
    except InvalidInputError:
        return
    assert len(d.frame) >= 1 and np.all(np.isfinite(d.frame["time_s"].dropna()))


_cell = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(str),
    st.integers(-(10**6), 10**6).map(str),
    st.text(alphabet="0123456789.,;-:eE T\t\"'°F", max_size=8),
)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    st.lists(st.lists(_cell, min_size=1, max_size=4), min_size=0, max_size=12),
    st.sampled_from([",", ";", "\t"]),
)
def test_fuzz_tables_only_invalid_input(rows, sep):
    text = "\n".join(sep.join(r) for r in rows) + "\n"
    try:
        d = read_logger(text)
        clean_logger(d)
    except InvalidInputError:
        pass
