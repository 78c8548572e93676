"""The ``brine`` table of a plan step (percent, kJ/mol) to and from :class:`procplan.model.Brine` (fractions, J/mol).

```toml
[[steps]]
name = "brine"
duration_min = 4320
medium_C = 4
h_W_m2K = 150
[steps.brine]
brine_percent = 18              # or dry_cure = true, or equalise = true (no exchange at the surface)
diffusivity = "salt-pork-loin"  # a registry key, or D_m2_s (with reference_C, activation_kJ_mol)
stop_when_core_percent = 1.5    # or stop_when_mean_percent; target_core_percent, target_mean_percent
diffusivity_factor = 1.0        # optional factor on the diffusivity (> 0; a sampled plan saved keeps it)
```
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.fields import _inverse, check_keys, file_number, optional, product_temperature
from procplan.model import Brine
from procplan.properties.diffusivity import DIFFUSIVITIES
from procplan.properties.salting import NACL_SATURATED_FRACTION, SOLUTES

BRINE_KEYS = (
    "solute",
    "brine_percent",
    "dry_cure",
    "equalise",
    "diffusivity",
    "D_m2_s",
    "reference_C",
    "activation_kJ_mol",
    "k_m_m_s",
    "partition",
    "initial_percent",
    "product_water_percent",
    "stop_when_core_percent",
    "stop_when_mean_percent",
    "target_core_percent",
    "target_mean_percent",
    "diffusivity_factor",
)
#: Largest solute mass fraction of a brine or syrup by solute [%] (saturated NaCl at 20 °C; a heavy syrup).
MAX_BRINE_PERCENT = {"salt": 100 * NACL_SATURATED_FRACTION, "sugar": 70.0}
#: Range of a product's solute content [%] accepted for targets, stops and the initial value.
PRODUCT_PERCENT_RANGE = (0.0, 30.0)
#: Range of a given effective diffusivity [m²/s].
D_GIVEN_RANGE = (1e-13, 1e-8)
#: Largest factor on the diffusivity (a study's sampled factor, saved with the plan; above 0).
MAX_DIFFUSIVITY_FACTOR = 1e4


def _percent(c: Collector, data: Mapping[str, Any], key: str, p: str, lo: float, hi: float) -> float | None:
    v = optional(c, data, key, p, validate.number, minimum=lo, maximum=hi, unit="%")
    return None if v is None else v / 100.0


def _flag(c: Collector, data: Mapping[str, Any], key: str, p: str) -> bool:
    v = data.get(key, False)
    if not isinstance(v, bool):
        c.add(InvalidInputError(p + key, v, "true or false"))
        return False
    return v


def _mode(c: Collector, data: Mapping[str, Any], p: str, solute: str) -> tuple[float | None, bool, bool]:
    """The surface condition: a brine of given strength, a dry cure or equalisation (exactly one)."""
    brine = _percent(c, data, "brine_percent", p, 0.1, MAX_BRINE_PERCENT.get(solute, 70.0))
    dry, equalise = _flag(c, data, "dry_cure", p), _flag(c, data, "equalise", p)
    given = [
        k
        for k, on in (("brine_percent", "brine_percent" in data), ("dry_cure", dry), ("equalise", equalise))
        if on
    ]
    if len(given) != 1:
        c.add(
            InvalidInputError(
                p + "brine_percent",
                data.get("brine_percent"),
                f"one of brine_percent (0.1 to {MAX_BRINE_PERCENT.get(solute, 70.0):g} %), dry_cure = true or "
                "equalise = true",
                "none given" if not given else f"{' and '.join(given)} given together",
            )
        )
    if dry and solute != "salt":
        c.add(InvalidInputError(p + "dry_cure", True, "a dry cure of salt only (solute = 'salt')"))
    return brine, dry, equalise


def _diffusivity(c: Collector, data: Mapping[str, Any], p: str, solute: str):
    """A registry key, or a given D [m²/s] with its reference temperature and activation energy."""
    key = data.get("diffusivity")
    d = optional(
        c, data, "D_m2_s", p, validate.number, minimum=D_GIVEN_RANGE[0], maximum=D_GIVEN_RANGE[1], unit="m²/s"
    )
    ref = optional(c, data, "reference_C", p, product_temperature)
    ea = optional(c, data, "activation_kJ_mol", p, validate.number, minimum=0.0, maximum=150.0, unit="kJ/mol")
    if key is not None:
        if not isinstance(key, str) or key not in DIFFUSIVITIES:
            c.add(InvalidInputError(p + "diffusivity", key, f"one of {', '.join(DIFFUSIVITIES)}"))
        elif DIFFUSIVITIES[key].solute != {"salt": "NaCl", "sugar": "sucrose"}.get(solute):
            c.add(InvalidInputError(p + "diffusivity", key, "a record of the step's solute"))
        if "D_m2_s" in data:
            c.add(InvalidInputError(p + "D_m2_s", data["D_m2_s"], "diffusivity or D_m2_s, not both"))
    elif "D_m2_s" not in data:
        c.add(
            InvalidInputError(
                p + "diffusivity",
                None,
                f"one of {', '.join(DIFFUSIVITIES)}, or D_m2_s ({D_GIVEN_RANGE[0]:g} to {D_GIVEN_RANGE[1]:g} m²/s)",
                "a brining step needs a diffusivity",
            )
        )
    if ea is not None and ref is None and "reference_C" not in data:
        c.add(
            InvalidInputError(p + "reference_C", None, "a temperature [°C]", "needed with activation_kJ_mol")
        )
    return key if isinstance(key, str) else None, d, ref, None if ea is None else ea * 1000.0


def _targets(c: Collector, data: Mapping[str, Any], p: str) -> dict[str, float | None]:
    lo, hi = PRODUCT_PERCENT_RANGE
    out = {
        k: _percent(c, data, f"{k}_percent", p, lo, hi)
        for k in ("stop_when_core", "stop_when_mean", "target_core", "target_mean")
    }
    if out["stop_when_core"] is not None and out["stop_when_mean"] is not None:
        c.add(
            InvalidInputError(
                p + "stop_when_mean_percent",
                data["stop_when_mean_percent"],
                "not set with stop_when_core_percent",
            )
        )
    return out


def brine_from_dict(c: Collector, data: Any, p: str) -> Brine | None:
    """The step's ``brine`` table as a Brine, its problems added to ``c`` (None when it is not a table)."""
    if not isinstance(data, Mapping):
        c.add(
            InvalidInputError(
                p.rstrip("."), data, "a table such as { brine_percent = 18, diffusivity = ... }"
            )
        )
        return None
    check_keys(c, data, BRINE_KEYS, p)
    solute = data.get("solute", "salt")
    with c.catch():
        validate.choice(p + "solute", solute, SOLUTES)
    brine, dry, equalise = _mode(c, data, p, solute)
    key, d, ref, ea = _diffusivity(c, data, p, solute)
    t = _targets(c, data, p)
    return Brine(
        solute=solute if solute in SOLUTES else "salt",
        brine_fraction=brine,
        dry_cure=dry,
        equalise=equalise,
        diffusivity=key,
        D_m2_s=d,
        reference_C=ref,
        activation_J_mol=ea,
        k_m_m_s=optional(c, data, "k_m_m_s", p, validate.number, minimum=1e-12, maximum=1e-2, unit="m/s"),
        partition=optional(c, data, "partition", p, validate.number, minimum=0.05, maximum=2.0, default=1.0),
        initial_fraction=_percent(c, data, "initial_percent", p, *PRODUCT_PERCENT_RANGE),
        water_fraction=_percent(c, data, "product_water_percent", p, 5.0, 99.0),
        stop_when_core_fraction=t["stop_when_core"],
        stop_when_mean_fraction=t["stop_when_mean"],
        target_core_fraction=t["target_core"],
        target_mean_fraction=t["target_mean"],
        D_factor=optional(
            c,
            data,
            "diffusivity_factor",
            p,
            validate.number,
            minimum=0.0,
            min_inclusive=False,
            maximum=MAX_DIFFUSIVITY_FACTOR,
            default=1.0,
        ),
    )


def brine_to_dict(b: Brine) -> dict[str, Any]:
    """The Brine as a TOML-ready table (the inverse of :func:`brine_from_dict`)."""
    d: dict[str, Any] = {"solute": b.solute}
    if b.brine_fraction is not None:
        d["brine_percent"] = _inverse(b.brine_fraction, lambda x: x / 100.0)
    if b.dry_cure:
        d["dry_cure"] = True
    if b.equalise:
        d["equalise"] = True
    if b.diffusivity is not None:
        d["diffusivity"] = b.diffusivity
    for key, value, per_unit in (
        ("D_m2_s", b.D_m2_s, 1.0),
        ("reference_C", b.reference_C, 1.0),
        ("activation_kJ_mol", b.activation_J_mol, 1000.0),
        ("k_m_m_s", b.k_m_m_s, 1.0),
        ("initial_percent", b.initial_fraction, 0.01),
        ("product_water_percent", b.water_fraction, 0.01),
        ("stop_when_core_percent", b.stop_when_core_fraction, 0.01),
        ("stop_when_mean_percent", b.stop_when_mean_fraction, 0.01),
        ("target_core_percent", b.target_core_fraction, 0.01),
        ("target_mean_percent", b.target_mean_fraction, 0.01),
    ):
        if value is not None:
            d[key] = _inverse(value, lambda x, f=per_unit: x * f)
    if b.partition != 1.0:
        d["partition"] = file_number(b.partition)
    if b.D_factor != 1.0:
        d["diffusivity_factor"] = file_number(b.D_factor)
    return d
