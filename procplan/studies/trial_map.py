"""The probe map of a heat-penetration trial: which logger channel sits in which piece at which position,
and when each run's step started.

A probe map file (TOML) speaks the planner's units (minutes)::

    [probes]
    "TC1" = { piece = "pouch 1, top basket", position = "core" }
    "TC2" = { piece = "pouch 2, bottom basket", position = "core" }
    "TC5" = { piece = "bath", position = "medium" }

    [runs."run-1.csv"]          # optional, by file name: the logger time at which the first step started
    step_start_min = 2.0

Positions are the plan's monitored points (``core``, ``surface``, ``mean``) or ``medium`` for a probe in the
heating or cooling medium (it gives the come-up time and the step start). Channels left out of the map are
not analysed; without a map every channel is a core probe in a piece named after it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError

#: Where a probe can sit: the plan's monitored points, or in the medium.
PROBE_POSITIONS: dict[str, str] = {
    "core": "the slowest-heating point of the piece (thermal centre)",
    "surface": "the surface of the piece",
    "mean": "compared with the piece's mean temperature",
    "medium": "in the heating or cooling medium (come-up time, step start)",
}
#: Positions that are in the product.
PRODUCT_POSITIONS = ("core", "surface", "mean")
_PROBE_KEYS = {"piece", "position"}
_RUN_KEYS = {"step_start_min"}


@dataclass(frozen=True)
class ProbeSpec:
    """One logger channel: the piece it is in and where."""

    channel: str
    piece: str
    position: str = "core"


@dataclass(frozen=True)
class ProbeMap:
    """Probes by channel, and each run's step start [s] by run name (file name)."""

    probes: tuple[ProbeSpec, ...] = ()
    step_start_s: dict[str, float] = field(default_factory=dict)

    def for_channels(self, channels) -> tuple[ProbeSpec, ...]:
        """The probes of a logger's channels: the mapped ones, or every channel as a core probe when the map
        is empty."""
        if not self.probes:
            return tuple(ProbeSpec(c, c, "core") for c in channels)
        return tuple(p for p in self.probes if p.channel in channels)


def probe_map_from_dict(data: dict[str, Any], source: str = "probe map") -> ProbeMap:
    """A ProbeMap from parsed TOML; every problem reported at once.

    >>> m = probe_map_from_dict({"probes": {"TC1": {"piece": "pouch 1", "position": "core"}},
    ...                          "runs": {"run-1.csv": {"step_start_min": 2}}})
    >>> m.probes[0].piece, m.step_start_s
    ('pouch 1', {'run-1.csv': 120.0})
    """
    col = Collector(source)
    if not isinstance(data, dict):
        raise InvalidInputError(source, type(data).__name__, "a table with [probes] and optional [runs]")
    for k in set(data) - {"probes", "runs"}:
        col.add(InvalidInputError(k, data[k], "only the tables probes and runs"))
    tables = {}
    for k in ("probes", "runs"):
        tables[k] = data.get(k) or {}
        if not isinstance(tables[k], dict):
            col.add(InvalidInputError(k, tables[k], f"a table [{k}]"))
            tables[k] = {}
    probes: list[ProbeSpec] = []
    for ch, spec in tables["probes"].items():
        with col.catch():
            if not isinstance(spec, dict):
                raise InvalidInputError(f"probes.{ch}", spec, "a table { piece = ..., position = ... }")
            for k in set(spec) - _PROBE_KEYS:
                raise InvalidInputError(f"probes.{ch}.{k}", spec[k], "only piece and position")
            piece = str(spec.get("piece", ch)).strip() or str(ch)
            pos = validate.choice(f"probes.{ch}.position", spec.get("position", "core"), PROBE_POSITIONS)
            probes.append(ProbeSpec(str(ch), piece, pos))
    starts: dict[str, float] = {}
    for run, spec in tables["runs"].items():
        with col.catch():
            if not isinstance(spec, dict) or set(spec) - _RUN_KEYS:
                raise InvalidInputError(f"runs.{run}", spec, "a table { step_start_min = ... }")
            if "step_start_min" in spec:
                v = validate.number(f"runs.{run}.step_start_min", spec["step_start_min"], minimum=0.0)
                starts[str(run)] = 60.0 * v
    col.raise_if_any()
    return ProbeMap(tuple(probes), starts)


def load_probe_map(path) -> ProbeMap:
    """Read a probe map TOML file."""
    from procplan.files.tomlfile import read_toml

    return probe_map_from_dict(read_toml(path), str(Path(path).name))
