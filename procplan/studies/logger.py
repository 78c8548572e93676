"""Temperature-logger files: read, preview the guessed column mapping, clean.

Accepted: CSV-like text with ``,``, ``;`` or tab separators, decimal point or comma, an optional header
(and preamble lines before it), a time column in seconds, minutes, hours or as timestamps, and one or more
probe channels in °C or °F. UTF-8 (with or without BOM), UTF-16 with BOM and Windows-1252 are decoded;
anything else, an empty or non-numeric file, or one larger than :data:`MAX_BYTES` or :data:`MAX_ROWS`
raises :class:`procplan.errors.InvalidInputError` naming the problem (and never another exception).
"""

from __future__ import annotations

import os
import re
import warnings
from collections import Counter
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from procplan.errors import InvalidInputError

MAX_BYTES = 50 * 1024 * 1024
MAX_ROWS = 1_000_000
SEPARATORS = (",", ";", "\t")
TIME_UNITS: dict[str, float | None] = {"s": 1.0, "min": 60.0, "h": 3600.0, "timestamp": None}
TEMPERATURE_UNITS = ("C", "F")

_TIME_NAME = re.compile(r"(time|zeit|date|datum|timestamp|elapsed|^t$|^t[ _(\[])", re.I)
_NUM = re.compile(r"^\s*[-+]?(\d+([.,]\d*)?|[.,]\d+)([eE][-+]?\d+)?\s*$")
_DEC_COMMA = re.compile(r"^\s*[-+]?\d*,\d+\s*$")


@dataclass(frozen=True)
class ColumnMapping:
    """Which columns mean what.

    time : name of the time column; time_unit : a key of TIME_UNITS
    channels : names of the probe columns; temperature_unit : "C" or "F"
    """

    time: str
    time_unit: str
    channels: tuple[str, ...]
    temperature_unit: str = "C"


@dataclass(frozen=True)
class LoggerPreview:
    """The first rows as read (strings) and the guessed format and mapping."""

    rows: pd.DataFrame
    columns: tuple[str, ...]
    mapping: ColumnMapping
    separator: str
    decimal: str
    encoding: str
    header: bool
    n_rows: int


@dataclass(frozen=True, eq=False)
class LoggerData:
    """A logger file as numbers: ``frame`` has ``time_s`` and one °C column per channel (its name).

    flags : what cleaning found (empty until :func:`clean_logger`); jumps : channel → times [s] of jumps;
    gaps : (start_s, end_s) of gaps between samples
    """

    frame: pd.DataFrame
    mapping: ColumnMapping
    source: str
    flags: tuple[str, ...] = ()
    jumps: dict[str, tuple[float, ...]] = field(default_factory=dict)
    gaps: tuple[tuple[float, float], ...] = ()
    cleaned: bool = False

    @property
    def channels(self) -> tuple[str, ...]:
        return self.mapping.channels

    def series(self, channel: str) -> tuple[np.ndarray, np.ndarray]:
        """(time_s, temperature_C) of one channel without missing values."""
        if channel not in self.frame.columns or channel == "time_s":
            raise InvalidInputError("channel", channel, "one of " + ", ".join(self.channels))
        sub = self.frame[["time_s", channel]].dropna()
        return sub["time_s"].to_numpy(dtype=float), sub[channel].to_numpy(dtype=float)


# --- reading ---------------------------------------------------------------------------------------------
def _raw_bytes(source: Any) -> tuple[bytes, str]:
    if isinstance(source, bytes | bytearray):
        data, name = bytes(source), "logger data"
    elif isinstance(source, str) and ("\n" in source or "\r" in source):
        data, name = source.encode("utf-8"), "logger text"
    elif isinstance(source, str | os.PathLike):
        p = Path(source)
        if not p.is_file():
            raise InvalidInputError("logger file", str(source), "an existing file")
        if p.stat().st_size > MAX_BYTES:
            raise InvalidInputError(
                "logger file",
                str(p),
                f"at most {MAX_BYTES // 2**20} MB",
                f"{p.stat().st_size / 2**20:.1f} MB",
            )
        data, name = p.read_bytes(), p.name
    elif hasattr(source, "read"):
        data = source.read(MAX_BYTES + 1)
        if isinstance(data, str):
            data = data.encode("utf-8")
        name = getattr(source, "name", "uploaded file")
    else:
        raise InvalidInputError("logger file", type(source).__name__, "a path, bytes, text or a file object")
    if len(data) > MAX_BYTES:
        raise InvalidInputError("logger file", name, f"at most {MAX_BYTES // 2**20} MB")
    return data, str(name)


def _decode(data: bytes, name: str) -> tuple[str, str]:
    if data.startswith(b"\xef\xbb\xbf"):
        candidates = [("utf-8-sig", data)]
    elif data.startswith((b"\xff\xfe", b"\xfe\xff")):
        candidates = [("utf-16", data)]
    else:
        candidates = [("utf-8", data), ("cp1252", data)]
    for enc, d in candidates:
        try:
            text = d.decode(enc)
        except UnicodeDecodeError:
            continue
        if "\x00" in text or sum(1 for c in text[:10000] if ord(c) < 32 and c not in "\t\r\n") > 0:
            raise InvalidInputError(
                "logger file",
                name,
                "text (UTF-8, UTF-16 with BOM or Windows-1252)",
                "control characters: mis-encoded or binary",
            )
        return text, enc
    raise InvalidInputError(
        "logger file", name, "text (UTF-8, UTF-16 with BOM or Windows-1252)", "cannot be decoded"
    )


def _is_num(s: str) -> bool:
    return bool(_NUM.match(s))


def _split(text: str, name: str, separator: str | None) -> tuple[list[list[str]], str]:
    import csv

    lines = [ln for ln in text.splitlines() if ln.strip()]
    if not lines:
        raise InvalidInputError("logger file", name, "a header and rows of numbers", "the file is empty")
    if len(lines) > MAX_ROWS + 50:
        raise InvalidInputError("logger file", name, f"at most {MAX_ROWS:,} rows", f"{len(lines):,} lines")
    if separator is None:
        sample = lines[:50] + lines[-50:] if len(lines) > 100 else lines
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
        separator = best
    elif separator not in SEPARATORS:
        raise InvalidInputError("separator", separator, "one of ',', ';', tab")
    rows = list(csv.reader(lines, delimiter=separator))
    widths = Counter(len(r) for r in rows)
    width = widths.most_common(1)[0][0]
    if width < 2:
        raise InvalidInputError("logger file", name, "a time column and at least one probe column")
    # Preamble lines (logger name, serial number...) come before the first row of the modal width.
    first = next(i for i, r in enumerate(rows) if len(r) == width)
    rows = [r for r in rows[first:] if len(r) == width]
    return [[c.strip().strip('"') for c in r] for r in rows], separator


def _guess(rows: list[list[str]], separator: str) -> tuple[bool, list[str], str]:
    head = rows[0]
    header = not all(_is_num(c) or c == "" for c in head[1:]) or not (
        _is_num(head[0]) or _looks_time(head[0])
    )
    body = rows[1:] if header else rows
    cols = (
        [c or f"column {j + 1}" for j, c in enumerate(head)]
        if header
        else [f"column {j + 1}" for j in range(len(head))]
    )
    seen: dict[str, int] = {}
    for j, c in enumerate(cols):
        if c in seen:
            cols[j] = f"{c} ({j + 1})"
        seen[c] = j
    decimal = "."
    if separator != ",":
        sample = [c for r in body[:200] for c in r[1:]]
        if sample and sum(bool(_DEC_COMMA.match(c)) for c in sample) > 0.3 * len(sample):
            decimal = ","
    return header, cols, decimal


def _looks_time(s: str) -> bool:
    return bool(re.match(r"^\s*\d{1,4}[-/.:]\d{1,2}([-/.: T]\d{1,4})*", s))


def _guess_mapping(cols: list[str], body: list[list[str]]) -> ColumnMapping:
    t_idx = next((j for j, c in enumerate(cols) if _TIME_NAME.search(c)), 0)
    tname = cols[t_idx]
    first_vals = [r[t_idx] for r in body[:20] if r[t_idx]]
    low = tname.lower()
    if first_vals and not all(_is_num(v) for v in first_vals):
        unit = "timestamp"
    elif re.search(r"\bmin|\(min\)|\[min\]|_min\b", low):
        unit = "min"
    elif re.search(r"\(h\)|\[h\]|_h\b|hour|stunde", low):
        unit = "h"
    else:
        unit = "s"
    channels = []
    for j, c in enumerate(cols):
        if j == t_idx:
            continue
        vals = [r[j] for r in body[:200] if r[j] != ""]
        if vals and sum(_is_num(v) for v in vals) >= 0.5 * len(vals):
            channels.append(c)
    heads = " ".join(channels)
    f = bool(re.search(r"°\s*F|degF|deg F|\(F\)|\[F\]|_F\b|fahrenheit", heads, re.I))
    return ColumnMapping(tname, unit, tuple(channels), "F" if f else "C")


def _table(source: Any, separator: str | None):
    data, name = _raw_bytes(source)
    text, enc = _decode(data, name)
    rows, sep = _split(text, name, separator)
    return rows, sep, enc, name


def preview_logger(source: Any, n_rows: int = 10, *, separator: str | None = None) -> LoggerPreview:
    """The first ``n_rows`` of a logger file as read, with the guessed separator, decimal mark, header and
    column mapping (pass the mapping, possibly edited, to :func:`read_logger`).

    >>> pv = preview_logger("Zeit [min];Kern °C;Oberfläche °C\\n0;74,1;73,0\\n1;73,9;70,2\\n")
    >>> pv.separator, pv.decimal, pv.mapping.time_unit, pv.mapping.channels
    (';', ',', 'min', ('Kern °C', 'Oberfläche °C'))
    """
    try:
        rows, sep, enc, name = _table(source, separator)
        header, cols, decimal = _guess(rows, sep)
        body = rows[1:] if header else rows
        mapping = _guess_mapping(cols, body)
        frame = pd.DataFrame(body[: max(int(n_rows), 0)], columns=cols)
    except InvalidInputError:
        raise
    except Exception as exc:  # the guarantee: malformed input never escapes as another exception
        raise InvalidInputError(
            "logger file", "unreadable", "a CSV logger file", f"{type(exc).__name__}: {exc}"
        ) from None
    return LoggerPreview(frame, tuple(cols), mapping, sep, decimal, enc, header, len(body))


def _numbers(values: list[str], decimal: str) -> np.ndarray:
    s = pd.Series(values, dtype="string")
    if decimal == ",":
        s = s.str.replace(".", "", regex=False).str.replace(",", ".", regex=False)
    return pd.to_numeric(s, errors="coerce").to_numpy(dtype=float, na_value=np.nan)


def read_logger(
    source: Any,
    mapping: ColumnMapping | None = None,
    *,
    separator: str | None = None,
    decimal: str | None = None,
) -> LoggerData:
    """Read a logger file into seconds and °C.

    Parameters
    ----------
    source : a path, bytes, text (with line breaks) or a file object
    mapping : which columns mean what (default: the guess of :func:`preview_logger`)
    separator, decimal : override the guessed separator (",", ";", tab) and decimal mark ("." or ",")

    Returns
    -------
    LoggerData with ``time_s`` from the first sample and one column per channel [°C], in file order

    >>> d = read_logger("time_min,probe (F)\\n0,165.2\\n1,160.7\\n")
    >>> d.frame["time_s"].tolist(), [round(x, 2) for x in d.frame["probe (F)"]]
    ([0.0, 60.0], [74.0, 71.5])
    """
    try:
        return _read(source, mapping, separator, decimal)
    except InvalidInputError:
        raise
    except Exception as exc:  # the guarantee: malformed input never escapes as another exception
        raise InvalidInputError(
            "logger file", "unreadable", "a CSV logger file", f"{type(exc).__name__}: {exc}"
        ) from None


def _read(source, mapping, separator, decimal) -> LoggerData:
    rows, sep, enc, name = _table(source, separator)
    header, cols, dec = _guess(rows, sep)
    if decimal is not None:
        if decimal not in (".", ","):
            raise InvalidInputError("decimal", decimal, "'.' or ','")
        dec = decimal
    if dec == "," and sep == ",":
        raise InvalidInputError("decimal", ",", "'.' when the separator is ','")
    body = rows[1:] if header else rows
    if not body:
        raise InvalidInputError("logger file", name, "rows of numbers below the header", "no data rows")
    if len(body) > MAX_ROWS:
        raise InvalidInputError("logger file", name, f"at most {MAX_ROWS:,} rows", f"{len(body):,} rows")
    m = mapping or _guess_mapping(cols, body)
    if m.time not in cols:
        raise InvalidInputError("mapping.time", m.time, "one of the columns " + ", ".join(cols))
    if m.time_unit not in TIME_UNITS:
        raise InvalidInputError("mapping.time_unit", m.time_unit, "one of " + ", ".join(TIME_UNITS))
    if m.temperature_unit not in TEMPERATURE_UNITS:
        raise InvalidInputError("mapping.temperature_unit", m.temperature_unit, "'C' or 'F'")
    if not m.channels:
        raise InvalidInputError("mapping.channels", (), "at least one probe column of numbers")
    for c in m.channels:
        if c not in cols or c == m.time:
            raise InvalidInputError("mapping.channels", c, "columns other than the time: " + ", ".join(cols))
    ti = cols.index(m.time)
    traw = [r[ti] for r in body]
    if m.time_unit == "timestamp":
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            ts = pd.to_datetime(pd.Series(traw), errors="coerce", dayfirst=False)
        if ts.isna().mean() > 0.5:
            raise InvalidInputError(
                "mapping.time", m.time, "timestamps, or numbers with time_unit s, min or h"
            )
        t = (ts - ts.dropna().min()).dt.total_seconds().to_numpy(dtype=float, na_value=np.nan)
    else:
        t = _numbers(traw, dec) * TIME_UNITS[m.time_unit]
    if np.isnan(t).mean() > 0.5:
        raise InvalidInputError("mapping.time", m.time, "a column of times", "most entries are not numbers")
    data = {"time_s": t}
    for c in m.channels:
        v = _numbers([r[cols.index(c)] for r in body], dec)
        if np.all(np.isnan(v)):
            raise InvalidInputError("mapping.channels", c, "a column of temperatures", "no numbers in it")
        data[c] = (v - 32.0) * 5.0 / 9.0 if m.temperature_unit == "F" else v
    frame = pd.DataFrame(data)
    finite_t = frame["time_s"].dropna()
    if finite_t.empty or not np.all(np.isfinite(finite_t)):
        raise InvalidInputError("mapping.time", m.time, "finite times")
    t0 = float(finite_t.min())
    frame["time_s"] = frame["time_s"] - t0
    vals = frame[list(m.channels)].to_numpy()
    if np.any(np.abs(vals[np.isfinite(vals)]) > 1000) or np.any(np.isinf(vals)):
        raise InvalidInputError(
            "mapping.channels", "temperatures beyond ±1000 °C", "product temperatures in °C or °F"
        )
    return LoggerData(frame, m, name)


# --- cleaning ----------------------------------------------------------------------------------------------
def clean_logger(data: LoggerData, *, jump_K: float = 5.0, max_gap_s: float | None = None) -> LoggerData:
    """Sort by time, drop rows without a time or without any reading, drop repeated times, flag jumps
    larger than ``jump_K`` between consecutive readings of a channel and gaps longer than ``max_gap_s``
    (default: five times the median sampling interval).

    >>> d = read_logger("t_s,a\\n0,10\\n60,9\\n30,9.5\\n90,\\n600,2\\n660,-20\\n")
    >>> c = clean_logger(d)
    >>> c.frame["time_s"].tolist(), c.jumps["a"], c.gaps
    ([0.0, 30.0, 60.0, 600.0, 660.0], (600.0, 660.0), ((60.0, 600.0),))
    """
    from procplan import validate

    jump = validate.positive("jump_K", jump_K, "K")
    f = data.frame.dropna(subset=["time_s"]).sort_values("time_s", kind="mergesort")
    n0 = len(data.frame)
    f = f.dropna(how="all", subset=list(data.channels))
    f = f.drop_duplicates(subset="time_s", keep="first").reset_index(drop=True)
    flags = []
    if len(f) < n0:
        flags.append(f"{n0 - len(f)} row(s) dropped (no time, no reading or a repeated time)")
    if len(f) < 2:
        raise InvalidInputError("logger file", data.source, "at least two samples with a time and a reading")
    t = f["time_s"].to_numpy()
    dt = np.diff(t)
    gap = (
        validate.positive("max_gap_s", max_gap_s, "s")
        if max_gap_s is not None
        else 5.0 * float(np.median(dt))
    )
    gaps = tuple((float(t[i]), float(t[i + 1])) for i in np.nonzero(dt > gap)[0])
    if gaps:
        flags.append(f"{len(gaps)} gap(s) longer than {gap:g} s")
    jumps = {}
    for c in data.channels:
        sub = f[["time_s", c]].dropna()
        d = np.abs(np.diff(sub[c].to_numpy()))
        jt = tuple(float(x) for x in sub["time_s"].to_numpy()[1:][d > jump])
        jumps[c] = jt
        if jt:
            flags.append(f"{c}: {len(jt)} jump(s) larger than {jump:g} K between samples")
    return replace(data, frame=f, flags=tuple(flags), jumps=jumps, gaps=gaps, cleaned=True)
