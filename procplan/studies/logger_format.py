"""Detecting the layout of a temperature-logger file (encoding, separator, decimal mark, header, column
mapping, time unit, date order, temperature unit) and turning its time column into seconds.

Each detection appends what it rests on to the format's ``decisions``; each can be overridden through
:class:`ReadOptions`; where the data cannot decide, InvalidInputError names the option that settles it.
Used by :mod:`procplan.studies.logger`.
"""

from __future__ import annotations

import csv
import re
import warnings
from collections import Counter
from dataclasses import dataclass

import numpy as np
import pandas as pd

from procplan.errors import InvalidInputError

MAX_BYTES = 50 * 1024 * 1024
MAX_ROWS = 1_000_000
SEPARATORS = (",", ";", "\t")
#: Time units: seconds per unit; "timestamp" (date and time) and "clock" (time of day) are read as times.
TIME_UNITS: dict[str, float | None] = {
    "ms": 1e-3,
    "s": 1.0,
    "min": 60.0,
    "h": 3600.0,
    "timestamp": None,
    "clock": None,
}
TEMPERATURE_UNITS = ("C", "F")
DATE_ORDERS = ("day-first", "month-first")
#: Readings that loggers write for "no value"; dropped and counted (override with ``missing_values``).
MISSING_VALUES = (-9999.0, -999.9, -999.0, 9999.0, -32768.0, 32767.0)
SAMPLE_ROWS = 300

_TIME_NAME = re.compile(r"(time|zeit|date|datum|timestamp|elapsed|uhrzeit|^t$|^t[ _(\[])", re.I)
_UNIT_CELL = r"(?:\s*(?:°|º|\*|deg\.?\s?)?\s*[CF])?"
_NUM = re.compile(r"^\s*[-+]?(\d+([.,]\d*)?|[.,]\d+)([eE][-+]?\d+)?" + _UNIT_CELL + r"\s*$", re.I)
_DEC_COMMA = re.compile(r"^\s*[-+]?\d*,\d+" + _UNIT_CELL + r"\s*$", re.I)
_DATE = r"\d{1,4}[./-]\d{1,2}[./-]\d{1,4}"
_CLOCK = r"\d{1,2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?"
_LINE_BREAK = re.compile(r"\r\n|\r|\n")
_DEC_POINT = re.compile(r"^\s*[-+]?\d*\.\d+" + _UNIT_CELL + r"\s*$", re.I)
_IS_DATE = re.compile(rf"^\s*{_DATE}\s*$")
_IS_CLOCK = re.compile(rf"^\s*{_CLOCK}\s*$")
_IS_STAMP = re.compile(rf"^\s*({_DATE}|\d{{4}}-\d{{2}}-\d{{2}})[ T]+{_CLOCK}")
_UNIT_STRIP_TEXT = r"\s*(?:°|º|\*|[dD][eE][gG]\.?\s?)?\s*[CFcf]\s*$"
_F_NAME = re.compile(r"(°|º|\*|deg\.?\s?)\s*F\b|[(\[]\s*F\s*[)\]]|(^|[_\s])F$|fahrenheit", re.I)
_C_NAME = re.compile(r"(°|º|\*|deg\.?\s?)\s*C\b|[(\[]\s*C\s*[)\]]|(^|[_\s])C$|celsius", re.I)
_TIME_WORDS = {
    "ms": {"ms", "msec", "millisecond", "milliseconds", "millisekunden"},
    "s": {"s", "sec", "secs", "second", "seconds", "sek", "sekunden"},
    "min": {"min", "mins", "minute", "minutes", "minuten"},
    "h": {"h", "hr", "hrs", "hour", "hours", "std", "stunde", "stunden"},
}


@dataclass(frozen=True)
class ColumnMapping:
    """Which columns mean what.

    time : name of the time column; time_unit : a key of TIME_UNITS
    channels : names of the probe columns; temperature_unit : "C" or "F"
    date : a separate date column read together with a time-of-day ``time`` column (or None)
    """

    time: str
    time_unit: str
    channels: tuple[str, ...]
    temperature_unit: str = "C"
    date: str | None = None


@dataclass(frozen=True)
class ReadOptions:
    """Overrides of every detection (None: detect). See :func:`read_logger`."""

    separator: str | None = None
    decimal: str | None = None
    encoding: str | None = None
    date_order: str | None = None
    time_column: str | None = None
    date_column: str | None = None
    time_unit: str | None = None
    temperature_unit: str | None = None
    missing_values: tuple[float, ...] | None = None

    @classmethod
    def build(cls, **given) -> ReadOptions:
        """Options from keyword values as a user types them: separator "tab" is a tab; missing_values may be
        text, numbers separated by ',' or "none"."""
        sep = given.get("separator")
        if sep in ("tab", "\\t"):
            given["separator"] = "\t"
        mv = given.get("missing_values")
        if isinstance(mv, str):
            try:
                words = [w for w in mv.split(",") if w.strip() and mv.strip().lower() != "none"]
                given["missing_values"] = tuple(float(w) for w in words)
            except ValueError:
                raise InvalidInputError("missing_values", mv, "numbers separated by ',' or 'none'") from None
        elif mv is not None:
            given["missing_values"] = tuple(float(v) for v in mv)
        return cls(**given)

    def __post_init__(self):
        for name, value, allowed in (
            ("separator", self.separator, SEPARATORS),
            ("decimal", self.decimal, (".", ",")),
            ("date_order", self.date_order, DATE_ORDERS),
            ("time_unit", self.time_unit, tuple(TIME_UNITS)),
            ("temperature_unit", self.temperature_unit, TEMPERATURE_UNITS),
        ):
            if value is not None and value not in allowed:
                raise InvalidInputError(name, value, "one of " + ", ".join(map(repr, allowed)))


#: The overrides, as options of ``procplan calibrate`` (``--time-unit`` ...) with their help.
OPTION_HELP = {
    "separator": "column separator: ',', ';' or tab",
    "decimal": "decimal mark: '.' or ','",
    "encoding": "text encoding, e.g. utf-8, utf-16, cp1252",
    "date_order": "day-first or month-first (needed when the dates fit both)",
    "time_column": "the time column (seconds, timestamps or times of day)",
    "date_column": "a separate date column, read with a time-of-day column",
    "time_unit": "ms, s, min, h, timestamp or clock (time of day)",
    "temperature_unit": "C or F for every probe column",
    "missing_values": "readings meaning 'no value', comma-separated, or 'none' (default -9999, -999.9 ...)",
}


@dataclass
class LoggerFormat:
    """What the first lines of the text say about its layout."""

    text: str
    name: str
    encoding: str
    separator: str
    decimal: str
    header: bool
    columns: list[str]
    skip: int  # raw lines before the first data row
    sample: list[list[str]]  # the first data rows, split
    decisions: list[str]
    data: bytes | None = None  # the raw bytes (read_csv decodes them again faster than it reads text)


def count_rows(text: str, skip: int) -> int:
    """Non-blank lines after the first ``skip`` lines."""
    rows = _LINE_BREAK.split(text)[skip:]
    return sum(1 for ln in rows if ln.strip())


def decode_text(data: bytes, name: str, encoding: str | None) -> tuple[str, str, str]:
    """(text, encoding, why)."""
    if encoding is not None:
        candidates, why = [(encoding, data)], "as requested"
    elif data.startswith(b"\xef\xbb\xbf"):
        candidates, why = [("utf-8-sig", data)], "byte-order mark"
    elif data.startswith((b"\xff\xfe", b"\xfe\xff")):
        candidates, why = [("utf-16", data)], "byte-order mark"
    elif len(data) >= 4 and data[1:400:2].count(0) > 0.4 * len(data[1:400:2]) > 0:
        candidates, why = [("utf-16-le", data)], "every other byte zero (UTF-16 without byte-order mark)"
    elif len(data) >= 4 and data[0:400:2].count(0) > 0.4 * len(data[0:400:2]) > 0:
        candidates, why = [("utf-16-be", data)], "every other byte zero (UTF-16 without byte-order mark)"
    else:
        candidates, why = [("utf-8", data), ("cp1252", data)], "decodes without error"
    allowed = "text (UTF-8, UTF-16 or Windows-1252, or the encoding given)"
    for enc, d in candidates:
        try:
            text = d.decode(enc)
        except (UnicodeDecodeError, LookupError):
            continue
        if any(ord(c) < 32 and c not in "\t\r\n" for c in text[:10000]):
            raise InvalidInputError("logger file", name, allowed, "control characters: mis-encoded or binary")
        return text, enc, why
    raise InvalidInputError("logger file", name, allowed, "cannot be decoded")


def _is_num(s: str) -> bool:
    return bool(_NUM.match(s))


def _is_value(s: str) -> bool:
    return s == "" or bool(_NUM.match(s) or _IS_DATE.match(s) or _IS_CLOCK.match(s) or _IS_STAMP.match(s))


def _choose_separator(sample: list[str], name: str) -> tuple[str, str]:
    best, best_score = None, (0.0, 0.0)
    for priority, sep in enumerate(("\t", ";", ",")):
        counts = [ln.count(sep) for ln in sample]
        n = Counter(counts).most_common(1)[0][0]
        if n == 0:
            continue
        score = (sum(c == n for c in counts) / len(counts), -priority)
        if score > best_score:
            best, best_score = sep, score
    if best is None:
        raise InvalidInputError(
            "logger file", name, "columns separated by ',', ';' or tab", "found a single column"
        )
    share = f"{best_score[0]:.0%}"
    return best, f"separator {best!r}: the same count on {share} of the sampled lines (override: separator)"


def sniff(text: str, name: str, opts: ReadOptions, encoding: str, why: str) -> LoggerFormat:
    if text.count("\n") > MAX_ROWS + 50:
        raise InvalidInputError(
            "logger file", name, f"at most {MAX_ROWS:,} rows", f"{text.count(chr(10)):,} lines"
        )
    n_head = 20 * SAMPLE_ROWS
    lines = _LINE_BREAK.split(text, maxsplit=n_head)  # line breaks as pandas.read_csv counts them
    head = [(i, ln) for i, ln in enumerate(lines[:n_head]) if ln.strip()][:SAMPLE_ROWS]
    if not head:
        raise InvalidInputError("logger file", name, "a header and rows of numbers", "the file is empty")
    decisions = [f"encoding {encoding}: {why}"]
    tail = [ln for ln in _LINE_BREAK.split(text[-20000:])[-50:] if ln.strip()]
    if opts.separator is None:
        sep, note = _choose_separator([ln for _, ln in head[:50]] + tail, name)
        decisions.append(note)
    else:
        sep = opts.separator
    rows = list(csv.reader([ln for _, ln in head], delimiter=sep))
    width = Counter(len(r) for r in rows).most_common(1)[0][0]
    if width < 2:
        raise InvalidInputError("logger file", name, "a time column and at least one probe column")
    # Preamble lines (logger name, serial number...) come before the first row of the modal width.
    first = next(k for k, r in enumerate(rows) if len(r) == width)
    rows = [[c.strip() for c in r] for r in rows[first:] if len(r) == width]
    header = not all(_is_value(c) for c in rows[0])
    cols = [c or f"column {j + 1}" for j, c in enumerate(rows[0])] if header else []
    cols = cols or [f"column {j + 1}" for j in range(width)]
    for j, c in enumerate(cols):
        if c in cols[:j]:
            cols[j] = f"{c} ({j + 1})"
    body = rows[1:] if header else rows
    skip = head[first][0] + (1 if header else 0)
    decisions.append(
        f"header on line {head[first][0] + 1}" + (f" after {first} preamble line(s)" if first else "")
        if header
        else "no header row: columns are numbered"
    )
    dec = opts.decimal or _decimal(body, sep, decisions)
    if dec == "," and sep == ",":
        raise InvalidInputError("decimal", ",", "'.' when the separator is ','")
    return LoggerFormat(text, name, encoding, sep, dec, header, cols, skip, body, decisions)


def _decimal(body: list[list[str]], sep: str, decisions: list[str]) -> str:
    if sep == ",":
        return "."
    cells = [c for r in body[:200] for c in r]
    n_comma = sum(bool(_DEC_COMMA.match(c)) for c in cells)
    n_point = sum(bool(_DEC_POINT.match(c)) for c in cells)
    if n_comma > n_point:
        decisions.append(
            f"decimal comma: {n_comma} sampled numbers have one, {n_point} a decimal point (override: decimal)"
        )
        return ","
    return "."


def _kind(values: list[str]) -> str:
    vals = [v for v in values if v != ""]
    if not vals:
        return "empty"
    for kind, pattern in (
        ("number", _NUM),
        ("timestamp", _IS_STAMP),
        ("date", _IS_DATE),
        ("clock", _IS_CLOCK),
    ):
        if sum(bool(pattern.match(v)) for v in vals) >= 0.5 * len(vals):
            return kind
    return "text"


def _time_unit_of(name: str) -> str | None:
    words = set(re.split(r"[^a-zµ]+", name.lower()))
    found = [u for u, names in _TIME_WORDS.items() if words & names]
    if len(found) > 1:
        raise InvalidInputError(
            "time_unit", name, "one of " + ", ".join(TIME_UNITS), "the header names several units"
        )
    return found[0] if found else None


def _pick_time(cols, kinds, opts: ReadOptions) -> tuple[str, str | None, str]:
    """(time column, date column, why)."""
    timely = ("number", "timestamp", "clock", "date")
    if opts.time_column is not None:
        if opts.time_column not in cols:
            raise InvalidInputError("time_column", opts.time_column, "one of the columns " + ", ".join(cols))
        t, why = opts.time_column, "as requested"
    else:
        named = [c for c in cols if _TIME_NAME.search(c) and kinds[c] in timely]
        t = named[0] if named else next((c for c in cols if kinds[c] in ("timestamp", "clock")), cols[0])
        why = "named like a time" if named else "the first time-like column"
    date = opts.date_column
    if date is None and kinds[t] == "date":
        clock = next((c for c in cols if kinds[c] == "clock"), None)
        if clock is not None:
            t, date = clock, t
    elif date is None and kinds[t] == "clock":
        date = next((c for c in cols if kinds[c] == "date"), None)
    if date is not None and date not in cols:
        raise InvalidInputError("date_column", date, "one of the columns " + ", ".join(cols))
    return t, date, why


def _temperature_unit(channels, body_of, opts: ReadOptions, decisions: list[str]) -> str:
    if opts.temperature_unit is not None:
        return opts.temperature_unit
    named: dict[str, str] = {}
    for c in channels:
        cells = " ".join(body_of(c)[:50])
        for unit, pattern in (("F", _F_NAME), ("C", _C_NAME)):
            if pattern.search(c) or re.search(r"\d\s*(°|º|\*|deg\.?\s?)\s*" + unit + r"\b", cells, re.I):
                named[c] = unit
    units = set(named.values())
    if len(units) > 1:
        raise InvalidInputError(
            "temperature_unit", "°C and °F in different columns", "'C' or 'F' for every probe column"
        )
    if units:
        unit = units.pop()
        decisions.append(
            f"temperatures in °{unit}: named in {', '.join(map(repr, named))} (override: temperature_unit)"
        )
        return unit
    decisions.append("temperatures in °C: no unit named in the header or cells (override: temperature_unit)")
    return "C"


def guess_mapping(fmt: LoggerFormat, opts: ReadOptions) -> ColumnMapping:
    cols, body = fmt.columns, fmt.sample

    def body_of(c):
        j = cols.index(c)
        return [r[j] for r in body[:200]]

    kinds = {c: _kind(body_of(c)) for c in cols}
    t, date, why = _pick_time(cols, kinds, opts)
    unit = opts.time_unit
    if unit is None and date is None and kinds[t] in ("timestamp", "clock"):
        unit = kinds[t]
        fmt.decisions.append(
            f"time: column {t!r} ({why}) holds {'timestamps' if unit == 'timestamp' else 'times of day'}"
        )
    elif unit is None and date is not None:
        unit = "clock"
        fmt.decisions.append(f"time: date column {date!r} with time-of-day column {t!r}")
    elif unit is None:
        unit = _time_unit_of(t)
        how = "named in its header" if unit else "not named in its header, read as seconds"
        unit = unit or "s"
        fmt.decisions.append(f"time: column {t!r} ({why}) in {unit}, {how} (override: time_unit)")
    channels = tuple(c for c in cols if c not in (t, date) and kinds[c] == "number")
    temp_unit = _temperature_unit(channels, body_of, opts, fmt.decisions)
    return ColumnMapping(t, unit, channels, temp_unit, date)


def numbers(s: pd.Series, decimal: str) -> np.ndarray:
    """Floats from a column: plain numbers, numbers with a decimal comma, or with a unit in the cell."""
    if pd.api.types.is_numeric_dtype(s.dtype) and not pd.api.types.is_bool_dtype(s.dtype):
        return s.to_numpy(dtype=float, na_value=np.nan, copy=True)
    t = s.astype("string").str.strip()
    if decimal == ",":
        t = t.str.replace(".", "", regex=False).str.replace(",", ".", regex=False)
    v = pd.to_numeric(t, errors="coerce").astype("Float64")
    bad = v.isna() & t.notna() & (t != "")
    if bad.any():  # units inside the cells, e.g. "4.5 °C": strip them (a plain pattern: vectorised)
        v[bad] = pd.to_numeric(t[bad].str.replace(_UNIT_STRIP_TEXT, "", regex=True), errors="coerce")
    return v.to_numpy(dtype=float, na_value=np.nan)


# --- times ---------------------------------------------------------------------------------------------------
def times_s(
    frame: pd.DataFrame, m: ColumnMapping, decimal: str, date_order, decisions: list[str]
) -> np.ndarray:
    """Seconds (not yet shifted to start at zero), NaN where a row has no readable time."""
    raw = frame[m.time]
    if m.date is not None:
        stamps = frame[m.date].astype("string").str.strip() + " " + raw.astype("string").str.strip()
        return _timestamps(stamps, date_order, decisions)
    if m.time_unit == "timestamp":
        return _timestamps(raw.astype("string").str.strip(), date_order, decisions)
    if m.time_unit == "clock":
        return _clock(raw.astype("string").str.strip(), decisions)
    return numbers(raw, decimal) * TIME_UNITS[m.time_unit]


def _to_datetime(s: pd.Series, order: str | None) -> pd.Series:
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return pd.to_datetime(s, errors="coerce", dayfirst=order == "day-first")


def _timestamps(s: pd.Series, date_order: str | None, decisions: list[str]) -> np.ndarray:
    order = date_order or _date_order(s, decisions)
    if date_order:
        decisions.append(f"dates read {date_order} as requested")
    ts = _to_datetime(s, order)
    if ts.isna().mean() > 0.5:
        raise InvalidInputError("mapping.time", "timestamps", "readable dates and times", "most do not parse")
    return (ts - ts.min()).dt.total_seconds().to_numpy(dtype=float, na_value=np.nan)


def _continuous(ts: pd.Series) -> bool:
    v = ts.dropna()
    d = np.diff((v - v.iloc[0]).dt.total_seconds().to_numpy()) if len(v) > 1 else np.zeros(0)
    return bool(len(v) and np.all(d >= 0) and (d.size == 0 or d.max() < 7 * 86400.0))


def _date_order(s: pd.Series, decisions: list[str]) -> str | None:
    """Day-first or month-first from the data; refuses when the dates fit both."""
    keys = pd.Series(pd.unique(s.str.slice(0, 10).dropna()), dtype="string")
    if keys.str.match(r"^\s*\d{4}[./-]").all():
        decisions.append("dates year-first (ISO)")
        return None
    parts = keys.str.extract(r"^\s*(\d{1,2})[./-](\d{1,2})[./-]").dropna().astype(int)
    if parts.empty:
        return None
    first_big, second_big = bool((parts[0] > 12).any()), bool((parts[1] > 12).any())
    if first_big and second_big:
        raise InvalidInputError(
            "date_order", "mixed", "dates in one order", "some have a day first, some second"
        )
    if first_big or second_big:
        order = "day-first" if first_big else "month-first"
        decisions.append(f"dates read {order}: a {'first' if first_big else 'second'} part above 12")
        return order
    if (parts[0] == parts[1]).all():
        decisions.append("dates: day and month are equal in every date, so their order does not matter")
        return "day-first"
    fits = [o for o in DATE_ORDERS if _continuous(_to_datetime(s, o))]
    if len(fits) == 1:
        other = "month-first" if fits[0] == "day-first" else "day-first"
        decisions.append(
            f"dates read {fits[0]}: read {other} the record would jump by weeks or go back in time"
        )
        return fits[0]
    raise InvalidInputError(
        "date_order",
        "ambiguous",
        "'day-first' or 'month-first'",
        "no date part is above 12 and both orders give a plausible record: say which",
    )


def _clock(s: pd.Series, decisions: list[str]) -> np.ndarray:
    """Seconds from times of day; a step back of more than 12 h is taken as midnight and adds a day."""
    s = s.str.replace(",", ".", regex=False)
    s = s.where(s.str.count(":") != 1, s + ":00")
    td = pd.to_timedelta(s, errors="coerce").dt.total_seconds()
    sec = td.to_numpy(dtype=float, na_value=np.nan, copy=True)
    idx = np.flatnonzero(np.isfinite(sec))
    back = np.diff(sec[idx]) < -43200.0
    sec[idx] = sec[idx] + 86400.0 * np.concatenate([[0.0], np.cumsum(back)])
    n = int(back.sum())
    decisions.append(
        f"times of day without a date: crossed midnight {n} time(s), a day added at each"
        if n
        else "times of day without a date: midnight not crossed"
    )
    return sec
