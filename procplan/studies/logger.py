"""Temperature-logger files: read, preview the detected format and column mapping, clean.

Accepted: CSV-like text with ``,``, ``;`` or tab separators, decimal point or comma, an optional header (and
preamble lines before it), and one or more probe channels in °C or °F (named in the header, e.g. ``Temp (°F)``
or ``Temp (*F)``, or inside the cells, e.g. ``4.5 °C``). Time is a number of ms, s, min or h (the unit named
in the header), a timestamp, a time of day (crossing midnight adds a day), or separate date and time columns.
UTF-8 (with or without BOM), UTF-16 (with or without BOM) and Windows-1252 are decoded. Missing-value
sentinels (:data:`MISSING_VALUES`, e.g. -9999) are dropped and counted.

Nothing is guessed silently: every detected property of the format is stated in ``decisions`` with what it
rests on, and each has an override parameter. Where the data cannot decide (dates that read both day-first
and month-first, °C and °F named in different columns) the reader refuses with
:class:`procplan.errors.InvalidInputError` naming the parameter that settles it. Once the format is known the
rows are parsed by :func:`pandas.read_csv` (vectorised). Anything unreadable, empty, or larger than
:data:`MAX_BYTES` or :data:`MAX_ROWS` raises InvalidInputError (and never another exception).
"""

from __future__ import annotations

import io
import os
import warnings
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd

from procplan.errors import InvalidInputError
from procplan.studies.logger_format import (
    DATE_ORDERS,
    MAX_BYTES,
    MAX_ROWS,
    MISSING_VALUES,
    OPTION_HELP,
    SEPARATORS,
    TEMPERATURE_UNITS,
    TIME_UNITS,
    ColumnMapping,
    LoggerFormat,
    ReadOptions,
    count_rows,
    decode_text,
    guess_mapping,
    numbers,
    sniff,
    times_s,
)

__all__ = [
    "DATE_ORDERS",
    "MAX_BYTES",
    "MAX_ROWS",
    "MISSING_VALUES",
    "OPTION_HELP",
    "SEPARATORS",
    "TEMPERATURE_UNITS",
    "TIME_UNITS",
    "ColumnMapping",
    "LoggerData",
    "LoggerPreview",
    "ReadOptions",
    "clean_logger",
    "preview_logger",
    "read_logger",
]


@dataclass(frozen=True)
class LoggerPreview:
    """The first rows as read (strings), the detected format and mapping, and what each detection rests on."""

    rows: pd.DataFrame
    columns: tuple[str, ...]
    mapping: ColumnMapping
    separator: str
    decimal: str
    encoding: str
    header: bool
    n_rows: int
    decisions: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False)
class LoggerData:
    """A logger file as numbers: ``frame`` has ``time_s`` and one °C column per channel (its name).

    flags : what cleaning found (empty until :func:`clean_logger`); jumps : channel → times [s] of jumps;
    gaps : (start_s, end_s) of gaps between samples; missing : channel → readings dropped as missing-value
    sentinels; decisions : how the format was read and why
    """

    frame: pd.DataFrame
    mapping: ColumnMapping
    source: str
    flags: tuple[str, ...] = ()
    jumps: dict[str, tuple[float, ...]] = field(default_factory=dict)
    gaps: tuple[tuple[float, float], ...] = ()
    cleaned: bool = False
    missing: dict[str, int] = field(default_factory=dict)
    decisions: tuple[str, ...] = ()

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


def _detect(source: Any, opts: ReadOptions) -> LoggerFormat:
    data, name = _raw_bytes(source)
    text, enc, why = decode_text(data, name, opts.encoding)
    fmt = sniff(text, name, opts, enc, why)
    fmt.data = data
    return fmt


def _guarded(fn, *args):
    try:
        return fn(*args)
    except InvalidInputError:
        raise
    except Exception as exc:  # the guarantee: malformed input never escapes as another exception
        raise InvalidInputError(
            "logger file", "unreadable", "a CSV logger file", f"{type(exc).__name__}: {exc}"
        ) from None


def preview_logger(source: Any, n_rows: int = 10, **options: Any) -> LoggerPreview:
    """The first ``n_rows`` of a logger file as read, with the detected separator, decimal mark, header and
    column mapping (pass the mapping, possibly edited, to :func:`read_logger`) and the reason for each.
    ``options`` are those of :func:`read_logger`.

    >>> pv = preview_logger("Zeit [min];Kern °C;Oberfläche °C\\n0;74,1;73,0\\n1;73,9;70,2\\n")
    >>> pv.separator, pv.decimal, pv.mapping.time_unit, pv.mapping.channels
    (';', ',', 'min', ('Kern °C', 'Oberfläche °C'))
    """

    def run():
        opts = ReadOptions.build(**options)
        fmt = _detect(source, opts)
        mapping = guess_mapping(fmt, opts)
        frame = pd.DataFrame(fmt.sample[: max(int(n_rows), 0)], columns=fmt.columns)
        n = count_rows(fmt.text, fmt.skip)
        return LoggerPreview(
            frame,
            tuple(fmt.columns),
            mapping,
            fmt.separator,
            fmt.decimal,
            fmt.encoding,
            fmt.header,
            n,
            tuple(fmt.decisions),
        )

    return _guarded(run)


def read_logger(
    source: Any,
    mapping: ColumnMapping | None = None,
    *,
    separator: str | None = None,
    decimal: str | None = None,
    encoding: str | None = None,
    date_order: str | None = None,
    time_column: str | None = None,
    date_column: str | None = None,
    time_unit: str | None = None,
    temperature_unit: str | None = None,
    missing_values: Any = None,
) -> LoggerData:
    """Read a logger file into seconds and °C.

    Parameters
    ----------
    source : a path, bytes, text (with line breaks) or a file object
    mapping : which columns mean what (default: detected, see :func:`preview_logger`)
    separator, decimal, encoding : override the detected separator (",", ";", tab), decimal mark ("." or
        ",") and text encoding (a Python codec name)
    date_order : "day-first" or "month-first" for dates such as 03/04/2026 (needed when the data fit both)
    time_column, date_column, time_unit, temperature_unit : override parts of the detected mapping
    missing_values : readings meaning "no value" (default :data:`MISSING_VALUES`; ``()`` or "none": none)

    Returns
    -------
    LoggerData with ``time_s`` from the first sample and one column per channel [°C], in file order;
    ``missing`` counts the sentinel readings dropped and ``decisions`` says how the format was read

    >>> d = read_logger("time_min,probe (F)\\n0,165.2\\n1,160.7\\n")
    >>> d.frame["time_s"].tolist(), [round(x, 2) for x in d.frame["probe (F)"]]
    ([0.0, 60.0], [74.0, 71.5])
    """
    given = dict(separator=separator, decimal=decimal, encoding=encoding, date_order=date_order)
    given.update(time_column=time_column, date_column=date_column, time_unit=time_unit)
    given.update(temperature_unit=temperature_unit, missing_values=missing_values)
    return _guarded(lambda: _read(source, mapping, ReadOptions.build(**given)))


def _check_mapping(m: ColumnMapping, cols: list[str]) -> None:
    if m.time not in cols:
        raise InvalidInputError("mapping.time", m.time, "one of the columns " + ", ".join(cols))
    if m.date is not None and (m.date not in cols or m.date == m.time):
        raise InvalidInputError("mapping.date", m.date, "another of the columns " + ", ".join(cols))
    if m.time_unit not in TIME_UNITS:
        raise InvalidInputError("mapping.time_unit", m.time_unit, "one of " + ", ".join(TIME_UNITS))
    if m.temperature_unit not in TEMPERATURE_UNITS:
        raise InvalidInputError("mapping.temperature_unit", m.temperature_unit, "'C' or 'F'")
    if not m.channels:
        raise InvalidInputError("mapping.channels", (), "at least one probe column of numbers")
    for c in m.channels:
        if c not in cols or c in (m.time, m.date):
            raise InvalidInputError("mapping.channels", c, "columns other than the time: " + ", ".join(cols))


def _numeric_time(m: ColumnMapping, column: str) -> bool:
    return column == m.time and m.date is None and TIME_UNITS.get(m.time_unit) is not None


def _load(fmt: LoggerFormat, m: ColumnMapping) -> pd.DataFrame:
    """The data rows of the needed columns, parsed by pandas.read_csv (numbers where they are plain)."""
    needed = [c for c in fmt.columns if c in (m.time, m.date, *m.channels)]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        frame = pd.read_csv(
            io.BytesIO(fmt.data) if fmt.data is not None else io.StringIO(fmt.text),
            encoding=fmt.encoding if fmt.data is not None else None,
            sep=fmt.separator,
            decimal=fmt.decimal,
            header=None,
            names=fmt.columns,
            usecols=needed,
            skiprows=fmt.skip,
            index_col=False,
            skipinitialspace=True,
            dtype={c: str for c in (m.time, m.date) if c is not None and not _numeric_time(m, c)},
            on_bad_lines="skip",
            engine="c",
        )
    if frame.empty:
        raise InvalidInputError("logger file", fmt.name, "rows of numbers below the header", "no data rows")
    if len(frame) > MAX_ROWS:
        raise InvalidInputError("logger file", fmt.name, f"at most {MAX_ROWS:,} rows", f"{len(frame):,} rows")
    return frame


def _read(source, mapping, opts: ReadOptions) -> LoggerData:
    fmt = _detect(source, opts)
    if mapping is None:
        m = guess_mapping(fmt, opts)
    else:
        m = mapping
        fmt.decisions.append("column mapping as given")
    _check_mapping(m, fmt.columns)
    frame = _load(fmt, m)
    t = times_s(frame, m, fmt.decimal, opts.date_order, fmt.decisions)
    if np.isnan(t).mean() > 0.5:
        raise InvalidInputError("mapping.time", m.time, "a column of times", "most entries are not times")
    sentinels = MISSING_VALUES if opts.missing_values is None else opts.missing_values
    data, missing = {"time_s": t}, {}
    for c in m.channels:
        v = numbers(frame[c], fmt.decimal)
        hit = np.isin(v, sentinels)
        missing[c] = int(hit.sum())
        v[hit] = np.nan
        if np.all(np.isnan(v)):
            raise InvalidInputError("mapping.channels", c, "a column of temperatures", "no numbers in it")
        data[c] = (v - 32.0) * 5.0 / 9.0 if m.temperature_unit == "F" else v
    if any(missing.values()):
        counts = ", ".join(f"{c}: {n}" for c, n in missing.items() if n)
        fmt.decisions.append(f"missing-value sentinels dropped ({counts}) (override: missing_values)")
    out = pd.DataFrame(data)
    finite_t = out["time_s"].dropna()
    if finite_t.empty or not np.all(np.isfinite(finite_t)):
        raise InvalidInputError("mapping.time", m.time, "finite times")
    out["time_s"] = out["time_s"] - float(finite_t.min())
    vals = out[list(m.channels)].to_numpy()
    if np.any(np.abs(vals[np.isfinite(vals)]) > 1000) or np.any(np.isinf(vals)):
        raise InvalidInputError(
            "mapping.channels", "temperatures beyond ±1000 °C", "product temperatures in °C or °F"
        )
    return LoggerData(out, m, fmt.name, missing=missing, decisions=tuple(fmt.decisions))


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
