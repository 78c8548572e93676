"""Site settings: who the plant is, its lines, the units it reads, its defaults, read from one TOML file.

The CLI, the app and the batch-plan sheet read the same :class:`SiteSettings`. The default file is
``product_library/site.toml`` of the demo plant (the invented Harrowgate Fields site). Loading validates
the whole file and reports every problem at once, each naming its field (``site.units.temperature`` …),
the value and what is allowed.

Display units change only what is shown: the library works in SI with °C inside.
"""

from __future__ import annotations

import os
import re
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.demo import demo_library_path
from procplan.files.fields import check_keys
from procplan.files.tomlfile import NAME_PATTERN, read_toml
from procplan.outcomes.rules import Band, Stage, limit_text
from procplan.units import c_to_f

#: The demo plant's settings.
DEFAULT_SITE_FILE = demo_library_path() / "site.toml"

#: Display units: symbol shown for each choice.
TEMPERATURE_UNITS: dict[str, str] = {"C": "°C", "F": "°F"}
TIME_UNITS: dict[str, str] = {"min": "min", "h": "h"}
#: Paper sizes of the printed sheet (width, height in points, 1 pt = 1/72 in): ISO 216 A4 210 × 297 mm,
#: ANSI US Letter 8.5 × 11 in.
PAPER_SIZES: dict[str, tuple[float, float]] = {
    "a4": (210.0 / 25.4 * 72.0, 297.0 / 25.4 * 72.0),
    "letter": (8.5 * 72.0, 11.0 * 72.0),
}

_TOP_KEYS = ("plant", "address", "document_prefix", "units", "defaults", "energy", "probe", "lines")
_PREFIX_PATTERN = re.compile(r"^[A-Za-z0-9][A-Za-z0-9-]{0,15}$")
_CURRENCY_PATTERN = re.compile(r"^[A-Za-z]{1,8}$")


@dataclass(frozen=True)
class SiteLine:
    """A production line: its name, the machines (equipment ids) on it, a short description."""

    name: str
    equipment: tuple[str, ...] = ()
    description: str = ""


@dataclass(frozen=True)
class SiteSettings:
    """Settings of one plant.

    plant, address : shown in the sheet's header
    lines : the plant's production lines
    temperature_unit : display unit, a key of ``TEMPERATURE_UNITS`` ("C" or "F")
    time_unit : display unit of process times, a key of ``TIME_UNITS`` ("min" or "h")
    margin_percent, margin_min : default safety margin for new plans [%], [min]
    default_rules : names of the rules that apply by default (library rule names)
    energy_price_per_kWh : electricity price [currency/kWh] (None: no cost shown)
    currency : ISO-style currency code of the price ("GBP")
    paper : default paper size of the sheet, a key of ``PAPER_SIZES``
    document_prefix : prefix of batch-plan document numbers
    probe_tolerance_K : smallest action-limit tolerance at a checkpoint [K] (the probe's accuracy)
    source : the file the settings came from
    """

    plant: str
    address: str = ""
    lines: tuple[SiteLine, ...] = ()
    temperature_unit: str = "C"
    time_unit: str = "min"
    margin_percent: float = 20.0
    margin_min: float = 0.0
    default_rules: tuple[str, ...] = ()
    energy_price_per_kWh: float | None = None
    currency: str = ""
    paper: str = "a4"
    document_prefix: str = "BP"
    probe_tolerance_K: float = 1.0
    source: str = ""

    # --- display --------------------------------------------------------------------------------
    @property
    def temperature_symbol(self) -> str:
        return TEMPERATURE_UNITS[self.temperature_unit]

    @property
    def time_symbol(self) -> str:
        return TIME_UNITS[self.time_unit]

    def temperature_value(self, temperature_C: float) -> float:
        """A temperature in the display unit.

        >>> SiteSettings("p", temperature_unit="F").temperature_value(5.0)
        41.0
        """
        return float(c_to_f(temperature_C)) if self.temperature_unit == "F" else float(temperature_C)

    def temperature_difference(self, difference_K: float) -> float:
        """A temperature difference in the display unit (°F differences are 9/5 of kelvin ones)."""
        return difference_K * 9.0 / 5.0 if self.temperature_unit == "F" else float(difference_K)

    def format_temperature(self, temperature_C: float | None, digits: int = 1) -> str:
        """``"3.0 °C"`` (or °F); an em dash for None.

        >>> SiteSettings("p").format_temperature(2.96)
        '3.0 °C'
        >>> SiteSettings("p", temperature_unit="F").format_temperature(57.0)
        '134.6 °F'
        """
        if temperature_C is None:
            return "—"
        return f"{self.temperature_value(temperature_C):.{digits}f} {self.temperature_symbol}"

    def time_value(self, time_min: float) -> float:
        """A process time in the display unit."""
        return time_min / 60.0 if self.time_unit == "h" else float(time_min)

    def format_time(self, time_min: float | None) -> str:
        """A process time: ``"190.4 min"``, or ``"3.17 h"``; an em dash for None.

        >>> SiteSettings("p").format_time(190.36)
        '190.4 min'
        >>> SiteSettings("p", time_unit="h").format_time(190.36)
        '3.17 h'
        """
        if time_min is None:
            return "—"
        if self.time_unit == "h":
            return f"{time_min / 60.0:.2f} h"
        return f"{time_min:.1f} min"

    def format_time_hm(self, time_min: float | None) -> str:
        """A process time on the sheet: an hour or more as hours and minutes (``"1:35 h"``), shorter as
        minutes (``"45.2 min"``); with the time unit "h", always hours and minutes; an em dash for None.

        >>> s = SiteSettings("p")
        >>> s.format_time_hm(95.2), s.format_time_hm(45.24), s.format_time_hm(-75.0), s.format_time_hm(59.96)
        ('1:35 h', '45.2 min', '-1:15 h', '1:00 h')
        >>> SiteSettings("p", time_unit="h").format_time_hm(45.24)
        '0:45 h'
        """
        if time_min is None:
            return "—"
        whole = round(abs(time_min))
        if self.time_unit == "min" and whole < 60:
            return f"{time_min:.1f} min"
        sign = "-" if time_min < 0 and whole > 0 else ""
        return f"{sign}{whole // 60}:{whole % 60:02d} h"

    def format_limit(self, item: Stage | Band) -> str:
        """A rule stage's or band's temperature limits in the site's unit, with the figures the rule's
        source publishes (:func:`procplan.outcomes.rules.limit_text`).

        >>> from procplan.outcomes.rules import Published
        >>> SiteSettings("p", temperature_unit="F").format_limit(Stage(None, 21.0, 120.0, to_published=Published(21.0, 70.0)))
        'start → 70 °F'
        """
        return limit_text(item, self.temperature_unit)

    def line_for(self, equipment_ids: Any) -> str:
        """The line that holds most of the given machines (the first such line on a tie), or "".

        >>> s = SiteSettings("p", lines=(SiteLine("Line 1", ("oven-a",)), SiteLine("Line 2", ("chiller-b",))))
        >>> s.line_for(["chiller-b"])
        'Line 2'
        """
        ids = {e for e in equipment_ids if e}
        best, count = "", 0
        for line in self.lines:
            n = len(ids.intersection(line.equipment))
            if n > count:
                best, count = line.name, n
        return best


# --- reading ---------------------------------------------------------------------------------------


def _text(c: Collector, data: Mapping[str, Any], key: str, field: str, *, required: bool, max_len: int = 200):
    v = data.get(key)
    if v is None:
        if required:
            c.add(
                InvalidInputError(field, None, f"a non-empty text of at most {max_len} characters", "missing")
            )
        return ""
    if not isinstance(v, str) or not v.strip() or len(v) > max_len:
        c.add(InvalidInputError(field, v, f"a non-empty text of at most {max_len} characters"))
        return ""
    return v.strip()


def _table(c: Collector, data: Mapping[str, Any], key: str, allowed: tuple[str, ...]) -> Mapping[str, Any]:
    v = data.get(key, {})
    if not isinstance(v, Mapping):
        c.add(InvalidInputError(f"site.{key}", v, "a table"))
        return {}
    check_keys(c, v, allowed, f"site.{key}.")
    return v


def _number(c: Collector, data: Mapping[str, Any], key: str, field: str, default, **kw):
    if key not in data:
        return default
    try:
        return validate.number(field, data[key], **kw)
    except InvalidInputError as exc:
        c.add(exc)
        return default


def _choice(c: Collector, data: Mapping[str, Any], key: str, field: str, options, default: str) -> str:
    v = data.get(key, default)
    try:
        return validate.choice(field, v, options)
    except InvalidInputError as exc:
        c.add(exc)
        return default


def _document_prefix(c: Collector, data: Mapping[str, Any]) -> str:
    prefix = data.get("document_prefix", "BP")
    if not isinstance(prefix, str) or not _PREFIX_PATTERN.match(prefix):
        c.add(
            InvalidInputError(
                "site.document_prefix",
                prefix,
                "1-16 characters A-Z a-z 0-9 -, starting with a letter or digit",
            )
        )
        prefix = "BP"
    return prefix


def _default_rules(c: Collector, defaults: Mapping[str, Any], library) -> tuple[str, ...]:
    """Names of the rules that apply by default (checked against the library when one is given)."""
    rules_raw = defaults.get("rules", [])
    rules: list[str] = []
    if not isinstance(rules_raw, list):
        c.add(InvalidInputError("site.defaults.rules", rules_raw, "a list of rule names"))
        rules_raw = []
    for i, r in enumerate(rules_raw):
        f = f"site.defaults.rules[{i}]"
        if not isinstance(r, str) or not NAME_PATTERN.match(r):
            c.add(InvalidInputError(f, r, "a rule name: 1-64 characters a-z 0-9 . _ -"))
        elif library is not None and r not in library.rules:
            c.add(InvalidInputError(f, r, "one of the library's rules: " + ", ".join(sorted(library.rules))))
        else:
            rules.append(r)
    return tuple(rules)


def _defaults(c: Collector, data: Mapping[str, Any], library) -> dict[str, Any]:
    """The ``[defaults]`` table: margins, paper size and default rules, as SiteSettings fields."""
    defaults = _table(c, data, "defaults", ("margin_percent", "margin_min", "rules", "paper"))
    margin_percent = _number(
        c,
        defaults,
        "margin_percent",
        "site.defaults.margin_percent",
        20.0,
        minimum=0.0,
        maximum=500.0,
        unit="%",
    )
    margin_min = _number(
        c, defaults, "margin_min", "site.defaults.margin_min", 0.0, minimum=0.0, maximum=24 * 60.0, unit="min"
    )
    paper = _choice(c, defaults, "paper", "site.defaults.paper", PAPER_SIZES, "a4")
    return {
        "margin_percent": margin_percent,
        "margin_min": margin_min,
        "paper": paper,
        "default_rules": _default_rules(c, defaults, library),
    }


def _energy(c: Collector, data: Mapping[str, Any]) -> tuple[float | None, str]:
    """Electricity price and its currency (a price needs a currency)."""
    energy = _table(c, data, "energy", ("price_per_kWh", "currency"))
    price = _number(c, energy, "price_per_kWh", "site.energy.price_per_kWh", None, minimum=0.0, maximum=100.0)
    currency = energy.get("currency", "")
    if currency != "" and (not isinstance(currency, str) or not _CURRENCY_PATTERN.match(currency)):
        c.add(InvalidInputError("site.energy.currency", currency, "a currency code of 1-8 letters, e.g. GBP"))
        currency = ""
    if price is not None and not currency:
        c.add(
            InvalidInputError(
                "site.energy.currency",
                currency or None,
                "a currency code of 1-8 letters",
                "a price needs its currency",
            )
        )
    return price, currency


def _line_equipment(c: Collector, eq: Any, p: str, library) -> tuple[str, ...]:
    """Equipment ids of one line (checked against the library when one is given)."""
    ids: list[str] = []
    if not isinstance(eq, list):
        c.add(InvalidInputError(p + "equipment", eq, "a list of equipment ids"))
        eq = []
    for j, e in enumerate(eq):
        f = f"{p}equipment[{j}]"
        if not isinstance(e, str) or not NAME_PATTERN.match(e):
            c.add(InvalidInputError(f, e, "an equipment id: 1-64 characters a-z 0-9 . _ -"))
        elif library is not None and e not in library.equipment:
            c.add(
                InvalidInputError(
                    f, e, "one of the library's machines: " + ", ".join(sorted(library.equipment))
                )
            )
        else:
            ids.append(e)
    return tuple(ids)


def _lines(c: Collector, data: Mapping[str, Any], library) -> tuple[SiteLine, ...]:
    """The ``[[lines]]`` tables: unique names, equipment ids, descriptions."""
    lines: list[SiteLine] = []
    raw_lines = data.get("lines", [])
    if not isinstance(raw_lines, list):
        c.add(InvalidInputError("site.lines", raw_lines, "a list of [[lines]] tables"))
        raw_lines = []
    names: set[str] = set()
    for i, ln in enumerate(raw_lines):
        p = f"site.lines[{i}]."
        if not isinstance(ln, Mapping):
            c.add(InvalidInputError(f"site.lines[{i}]", ln, "a table with name, equipment, description"))
            continue
        check_keys(c, ln, ("name", "equipment", "description"), p)
        name = _text(c, ln, "name", p + "name", required=True, max_len=80)
        if name and name in names:
            c.add(InvalidInputError(p + "name", name, "a name not used by another line"))
        names.add(name)
        desc = _text(c, ln, "description", p + "description", required=False)
        ids = _line_equipment(c, ln.get("equipment", []), p, library)
        lines.append(SiteLine(name, ids, desc))
    return tuple(lines)


def site_from_dict(data: Mapping[str, Any], source: str = "site", library=None) -> SiteSettings:
    """Validate a site-settings table (as read from TOML); every problem is reported together.

    ``library`` (optional) checks that default rules and line equipment exist in it.

    >>> s = site_from_dict({"plant": "Demo", "units": {"temperature": "F"}})
    >>> s.plant, s.temperature_symbol
    ('Demo', '°F')
    >>> site_from_dict({"plant": "Demo", "units": {"time": "s"}})
    Traceback (most recent call last):
    ...
    procplan.errors.InvalidInputError: site.units.time = 's': allowed one of 'min', 'h'
    """
    c = Collector(source)
    if not isinstance(data, Mapping):
        raise InvalidInputError("site", data, "a TOML table")
    check_keys(c, data, _TOP_KEYS, "site.")
    plant = _text(c, data, "plant", "site.plant", required=True)
    address = _text(c, data, "address", "site.address", required=False, max_len=300)
    prefix = _document_prefix(c, data)
    units = _table(c, data, "units", ("temperature", "time"))
    t_unit = _choice(c, units, "temperature", "site.units.temperature", TEMPERATURE_UNITS, "C")
    time_unit = _choice(c, units, "time", "site.units.time", TIME_UNITS, "min")
    defaults = _defaults(c, data, library)
    price, currency = _energy(c, data)
    probe = _table(c, data, "probe", ("tolerance_K",))
    tol = _number(
        c,
        probe,
        "tolerance_K",
        "site.probe.tolerance_K",
        1.0,
        minimum=0.0,
        min_inclusive=False,
        maximum=10.0,
        unit="K",
    )
    lines = _lines(c, data, library)
    c.raise_if_any()
    return SiteSettings(
        plant=plant,
        address=address,
        lines=lines,
        temperature_unit=t_unit,
        time_unit=time_unit,
        energy_price_per_kWh=price,
        currency=currency,
        document_prefix=prefix,
        probe_tolerance_K=tol,
        source=source,
        **defaults,
    )


def load_site(path: str | os.PathLike | None = None, *, library=None) -> SiteSettings:
    """Read and validate a site-settings file (default: the demo plant's ``product_library/site.toml``).

    >>> load_site().plant
    'Harrowgate Fields'
    """
    p = Path(path) if path is not None else DEFAULT_SITE_FILE
    return site_from_dict(read_toml(p), source=str(p), library=library)


def site_of_library(root: str | os.PathLike, *, library=None) -> SiteSettings:
    """The settings of a library folder: its ``site.toml``, or the defaults (°C, minutes) when it has none."""
    p = Path(root) / "site.toml"
    if p.is_file():
        return load_site(p, library=library)
    return SiteSettings(plant="", source="defaults")


def site_to_dict(site: SiteSettings) -> dict[str, Any]:
    """The mapping :func:`site_from_dict` reads (TOML-ready; an unset price is left out).

    >>> s = load_site()
    >>> site_from_dict(site_to_dict(s), source=s.source) == s
    True
    """
    out: dict[str, Any] = {"plant": site.plant}
    if site.address:
        out["address"] = site.address
    out["document_prefix"] = site.document_prefix
    out["units"] = {"temperature": site.temperature_unit, "time": site.time_unit}
    out["defaults"] = {
        "margin_percent": site.margin_percent,
        "margin_min": site.margin_min,
        "rules": list(site.default_rules),
        "paper": site.paper,
    }
    if site.energy_price_per_kWh is not None:
        out["energy"] = {"price_per_kWh": site.energy_price_per_kWh, "currency": site.currency}
    out["probe"] = {"tolerance_K": site.probe_tolerance_K}
    out["lines"] = [
        {
            "name": ln.name,
            "equipment": list(ln.equipment),
            **({"description": ln.description} if ln.description else {}),
        }
        for ln in site.lines
    ]
    return out


def save_site(root: str | os.PathLike, site: SiteSettings, *, library=None) -> Path:
    """Validate and write the site settings as ``site.toml`` of a library folder, atomically (the old file is
    replaced: a folder has one site)."""
    from procplan.files.tomlfile import dump_toml, write_atomic

    data = site_to_dict(site)
    site_from_dict(data, source="site", library=library)  # what is written must load again
    return write_atomic(Path(root) / "site.toml", dump_toml(data), overwrite=True)


def site_to_text(site: SiteSettings) -> str:
    """The settings as readable lines (for ``procplan site``)."""
    price = (
        f"{site.energy_price_per_kWh:g} {site.currency}/kWh"
        if site.energy_price_per_kWh is not None
        else "not set"
    )
    out = [
        f"site settings from {site.source or 'defaults'}",
        f"  plant: {site.plant}",
        f"  address: {site.address or '—'}",
        f"  display units: temperature {site.temperature_symbol}, time {site.time_symbol}",
        f"  default margin: {site.margin_percent:g} % + {site.margin_min:g} min",
        f"  default rules: {', '.join(site.default_rules) or 'none'}",
        f"  electricity price: {price}",
        f"  paper: {site.paper}; document numbers {site.document_prefix}-…; probe tolerance {site.probe_tolerance_K:g} K",
        f"  lines ({len(site.lines)}):",
    ]
    for line in site.lines:
        eq = ", ".join(line.equipment) or "no machines listed"
        out.append(f"    {line.name}: {eq}" + (f" — {line.description}" if line.description else ""))
    return "\n".join(out)
