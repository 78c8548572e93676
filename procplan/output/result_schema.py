"""The JSON Schema of a run's result (``procplan run --json``), versioned, for a plant's LIMS or MES.

The document is ``{"schema": ..., "schema_version": ..., "history": {...}, "summary": {...}}``:

- ``history``: columns of equal length, one entry per saved time point: ``time_s`` [s], ``core_C``,
  ``surface_C``, ``mean_C`` [°C], ``heat_flow_W`` [W, positive into the product], ``step`` (step name),
  ``step_index`` (0-based); with depth targets, ``depth_<d>mm_C`` [°C], the temperature d mm below the
  surface (1.1).
- ``summary``: title, product, geometry, piece mass [kg], start temperature [°C], the end state, the property
  source, one entry per step (solver, reason, regime, medium and h at each setting point, surface breakdown,
  energy-balance error, warnings) and the ``outcomes``: targets with margins, the rule check per stage and
  band, lethality and the quality indicator, freezing times, energy and refrigeration per step, weight loss,
  the electricity price and the cost per batch, warnings.

Units are in every name (``_s``, ``_min``, ``_C``, ``_W_m2K``, ``_J_per_batch``, ``_kW`` …). A value the
run could not give (a target not reached, no price set) is ``null``; JSON has no NaN.

Versioning: ``schema_version`` is "MAJOR.MINOR". A new field raises MINOR (readers that ignore unknown
fields keep working: every object allows more properties than it lists); a field removed, renamed or given
another unit or meaning raises MAJOR. ``python -m procplan.output.result_schema`` prints the schema.
"""

from __future__ import annotations

import json
from typing import Any

#: The schema's name and version, written at the top of every result document.
RESULT_SCHEMA_NAME = "procplan-result"
RESULT_SCHEMA_VERSION = "1.4"

_NUM = {"type": "number"}
_NUM_OR_NULL = {"type": ["number", "null"]}
_TEXT = {"type": "string"}
_TEXT_OR_NULL = {"type": ["string", "null"]}
_BOOL = {"type": "boolean"}
_BOOL_OR_NULL = {"type": ["boolean", "null"]}
_TEXTS = {"type": "array", "items": _TEXT}


def _obj(props: dict[str, Any], required: tuple[str, ...] | None = None, nullable: bool = False) -> dict:
    """An object with documented properties (all required unless listed), open to new fields."""
    return {
        "type": ["object", "null"] if nullable else "object",
        "properties": props,
        "required": list(props if required is None else required),
        "additionalProperties": True,
    }


def _array(items: dict) -> dict:
    return {"type": "array", "items": items}


_TARGET_RESULT = _obj(
    {
        "reached": {**_BOOL, "description": "the point reached the target temperature"},
        "time_s": {**_NUM_OR_NULL, "description": "time from the process start when reached [s]"},
        "target_C": {**_NUM, "description": "target temperature [°C]"},
        "direction": {**_TEXT, "description": '"down" when cooling to the target, "up" when heating'},
        "start_s": _NUM_OR_NULL,
        "closest_C": {**_NUM_OR_NULL, "description": "closest temperature reached [°C]"},
        "reason": _TEXT,
    },
    required=("reached", "time_s", "target_C"),
)
_MARGIN = _obj(
    {
        "predicted_min": {**_NUM, "description": "predicted time to target [min]"},
        "margin_percent": _NUM,
        "fixed_min": _NUM,
        "plan_min": {**_NUM, "description": "plan time with the safety margin [min]"},
        "cycle_min": _NUM_OR_NULL,
        "spare_min": _NUM_OR_NULL,
        "cycle_too_short": _BOOL,
        "message": _TEXT,
    },
    required=("predicted_min", "plan_min"),
    nullable=True,
)
_LETHALITY = _obj(
    {
        "name": _TEXT,
        "target": _TEXT,
        "source": _TEXT,
        "point": _TEXT,
        "reference_C": {**_NUM, "description": "reference temperature of F [°C]"},
        "z_C": {**_NUM_OR_NULL, "description": "z-value [K]; null for a tabulated lethal-rate requirement"},
        "total_F_min": {**_NUM, "description": "accumulated F [min at the reference temperature]"},
        "required_F_min": _NUM_OR_NULL,
        "log_reduction": _NUM_OR_NULL,
        "confirmed": {**_BOOL, "description": "false: an indicative preset, to be confirmed"},
    },
    required=("name", "point", "reference_C", "total_F_min", "required_F_min", "confirmed"),
    nullable=True,
)
_RULE = _obj(
    {
        "rule_name": _TEXT,
        "source": _TEXT,
        "point": _TEXT,
        "passed": _BOOL,
        "stages": _array(
            _obj(
                {
                    "index": {"type": "integer"},
                    "stage": _obj({"from_C": _NUM_OR_NULL, "to_C": _NUM, "within_min": _NUM}),
                    "passed": _BOOL_OR_NULL,
                    "used_min": _NUM_OR_NULL,
                    "allowed_min": _NUM_OR_NULL,
                    "margin_min": _NUM_OR_NULL,
                    "reason": _TEXT,
                },
                required=("index", "stage", "passed"),
            )
        ),
        "bands": _array(
            _obj(
                {
                    "index": {"type": "integer"},
                    "band": _obj({"low_C": _NUM_OR_NULL, "high_C": _NUM_OR_NULL}),
                    "passed": _BOOL_OR_NULL,
                    "inside_min": _NUM,
                    "outside_min": _NUM,
                    "reason": _TEXT,
                },
                required=("index", "band", "passed"),
            )
        ),
        "reasons": _TEXTS,
    },
    nullable=True,
)
_ENERGY = _obj(
    {
        "pieces": _NUM,
        "heat_removed_J_per_batch": _NUM,
        "heat_added_J_per_batch": _NUM,
        "peak_duty_kW_per_batch": {**_NUM, "description": "largest 1-min mean duty of the batch [kW]"},
        "peak_time_s": _NUM_OR_NULL,
        "enthalpy_change_J_per_piece": _NUM,
        "balance_error": _NUM_OR_NULL,
    }
)
_SECOND_END = _obj({"core_C": _NUM, "surface_C": _NUM, "mean_C": _NUM})
_SECOND_PRODUCT = _obj(
    {
        "product": _TEXT,
        "pieces": {"type": "integer"},
        "initial_temperature_C": _NUM,
        "target_core_C": _NUM_OR_NULL,
        "note": _TEXT,
        "target": _obj(
            {
                "core_C": _NUM,
                "reached": {"type": "boolean"},
                "time_min": {**_NUM_OR_NULL, "description": "when its core reached the target, plan's clock"},
                "step": {"type": ["string", "null"]},
                "at_loading": {"type": "boolean"},
                "end_core_C": _NUM,
            },
            nullable=True,
        ),
        "steps": _array(
            _obj(
                {
                    "name": _TEXT,
                    "product": _TEXT,
                    "pieces": {"type": "integer"},
                    "end": _SECOND_END,
                    "heat_kJ": {**_NUM, "description": "heat into all its pieces over the step [kJ]"},
                    "stop_C": _NUM_OR_NULL,
                    "time_to_stop_min": _NUM_OR_NULL,
                    "h_W_m2K": {**_NUM_OR_NULL, "description": "its h for its own shape and size [W/m²K]"},
                    "h_source": _TEXT,
                    "solved_with_medium": {
                        "type": "boolean",
                        "description": "false: solved alone in the step's medium (a step that couples no medium)",
                    },
                    "target_core_C": _NUM_OR_NULL,
                    "time_to_target_min": {
                        **_NUM_OR_NULL,
                        "description": "when its core crossed its target in this step, from the step start",
                    },
                }
            )
        ),
        "history": {
            "type": ["object", "null"],
            "description": "its core, surface and mean over the loaded steps on the plan's clock",
            "properties": {
                **{k: _array(_NUM) for k in ("time_s", "core_C", "surface_C", "mean_C")},
                "step": _array(_TEXT),
            },
            "additionalProperties": True,
        },
    }
)
_LOAD = {
    **_obj(
        {"model": _TEXT, "pieces": {"type": ["integer", "null"]}, "second_product": _SECOND_PRODUCT},
        required=("model",),
    ),
    "description": "the load model, the pieces and a second product in the same load (1.2; its h and core target 1.3)",
}
_REFRIGERATION = _obj(
    {
        "step": _TEXT,
        "heat_removed_J_per_batch": _NUM,
        "heat_added_J_per_batch": _NUM,
        "peak_duty_kW": _NUM,
        "mean_duty_kW": _NUM,
        "refrigeration": _obj(
            {"cop": _NUM, "cop_carnot": _NUM, "electricity_kWh": _NUM, "cost": _NUM_OR_NULL},
            required=("cop", "electricity_kWh"),
            nullable=True,
        ),
        "basis": _TEXT,
    }
)
_OUTCOMES = _obj(
    {
        "targets": _array(
            _obj(
                {
                    "step": _TEXT,
                    "point": {**_TEXT, "description": "core, surface, mean or depth"},
                    "depth_mm": {
                        **_NUM_OR_NULL,
                        "description": "for point depth: the depth below the surface [mm] (1.1)",
                    },
                    "label": {**_TEXT, "description": "the point in words (1.1)"},
                    "kind": {"enum": ["stop", "target"]},
                    "target": _TARGET_RESULT,
                    "margin": _MARGIN,
                },
                required=("step", "point", "kind", "target", "margin"),
            )
        ),
        "rule_check": _RULE,
        "lethality": _LETHALITY,
        "quality": _LETHALITY,
        "freezing": {"type": ["object", "null"]},
        "energy": _ENERGY,
        "refrigeration": _array(_REFRIGERATION),
        "energy_balance": _NUM_OR_NULL,
        "weight_loss_percent": {
            "description": "(step name, water evaporated [% of the piece's mass at the step's start]) for unwrapped "
            "products",
            "type": "array",
            "items": {"type": "array", "prefixItems": [_TEXT, _NUM], "minItems": 2, "maxItems": 2},
        },
        "yield_percent": {
            **_NUM_OR_NULL,
            "description": "mass at the end over the mass at the start [%] from the evaporation of every step (for "
            "unwrapped meat the upper bound of the yield: its expelled juice kept in the piece; null without any loss)",
        },
        "drainable_juice_percent": {
            "description": "(step name, juice the heated proteins expelled and that did not evaporate [% of the "
            "piece's mass at the step's start]) for unwrapped meat (1.4)",
            "type": "array",
            "items": {"type": "array", "prefixItems": [_TEXT, _NUM], "minItems": 2, "maxItems": 2},
        },
        "cook_loss_upper_percent": {
            **_NUM_OR_NULL,
            "description": "upper bound of the cook loss over the run [% of the starting mass]: evaporation and all "
            "the drainable juice drained; its lower bound is 100 − yield_percent (null without a drip model) (1.4)",
        },
        "yield_lower_percent": {
            **_NUM_OR_NULL,
            "description": "100 − cook_loss_upper_percent [%] (null without a drip model) (1.4)",
        },
        "warnings": _TEXTS,
        "price": _obj({"price_per_kWh": _NUM, "currency": _TEXT}, nullable=True),
        "cost_per_batch": {**_NUM_OR_NULL, "description": "electricity cost of one batch [currency]"},
    }
)
_STEP = _obj(
    {
        "name": _TEXT,
        "start_min": _NUM,
        "end_min": _NUM,
        "solver": {**_TEXT, "description": "the solver used (exact, lumped, finite-volume)"},
        "reason": _TEXT,
        "regime": _obj({"bi": _NUM, "bi_lumped": _NUM, "regime": _TEXT, "reason": _TEXT}),
        "medium_C": _array(_NUM),
        "h_W_m2K": _array(_NUM),
        "surface": _obj(
            {
                "source": _TEXT,
                "correlation": _TEXT,
                "h_conv_W_m2K": _NUM,
                "h_rad_W_m2K": _NUM,
                "packaging_resistance_m2K_W": _NUM,
                "h_eff_W_m2K": _NUM,
            }
        ),
        "stopped": _BOOL,
        "stop_time_min": _NUM_OR_NULL,
        "energy_balance_error": _NUM_OR_NULL,
        "details": {"type": "object"},
        "warnings": _TEXTS,
        "unreliable_reason": _TEXT_OR_NULL,
        "drip": {
            **_obj(
                {
                    "drainable_juice_kg": _NUM,
                    "drainable_juice_percent": _NUM,
                    "evaporative_loss_percent": _NUM,
                    "cook_loss_upper_percent": _NUM,
                    "yield_percent": _NUM,
                    "yield_lower_percent": _NUM,
                    "expelled_share_percent": _NUM,
                    "holding": _TEXT,
                    "basis": _TEXT,
                },
                nullable=True,
            ),
            "description": "the bracket of an unwrapped meat product's cook loss in the step [% of the piece's mass at "
            "the step's start]: evaporation alone (lower) and with all the drainable juice drained (upper) (1.4)",
        },
    },
    required=("name", "start_min", "end_min", "solver", "reason", "medium_C", "h_W_m2K", "surface"),
)
_HISTORY_COLUMNS = {
    "time_s": "time from the process start [s]",
    "core_C": "core temperature [°C]",
    "surface_C": "surface temperature [°C]",
    "mean_C": "volume-mean temperature [°C]",
    "heat_flow_W": "heat flow into one piece [W] (negative: heat removed)",
}

RESULT_SCHEMA: dict[str, Any] = {
    "$schema": "https://json-schema.org/draft/2020-12/schema",
    "$id": f"urn:procplan:{RESULT_SCHEMA_NAME}:{RESULT_SCHEMA_VERSION}",
    "title": "procplan result",
    "description": (
        "One run of a thermal-process plan: the temperature history and the summary with every outcome. "
        "SI units with °C; units are in the names."
    ),
    "type": "object",
    "required": ["schema", "schema_version", "history", "summary"],
    "properties": {
        "schema": {"const": RESULT_SCHEMA_NAME},
        "schema_version": {"type": "string", "pattern": r"^1\.\d+$"},
        "history": {
            "type": "object",
            "required": [*_HISTORY_COLUMNS, "step", "step_index"],
            "properties": {
                **{k: {"description": d, **_array(_NUM_OR_NULL)} for k, d in _HISTORY_COLUMNS.items()},
                "step": {"description": "name of the step", **_array(_TEXT)},
                "step_index": {"description": "0-based step number", **_array({"type": "integer"})},
            },
            "additionalProperties": True,
        },
        "summary": _obj(
            {
                "title": _TEXT,
                "product": _TEXT,
                "geometry": _TEXT,
                "piece_mass_kg": _NUM,
                "start_temperature_C": _NUM,
                "end": _obj({"time_s": _NUM, "core_C": _NUM, "surface_C": _NUM, "mean_C": _NUM}),
                "depths": {
                    **_array(_obj({"depth_mm": _NUM, "label": _TEXT, "end_C": _NUM})),
                    "description": "the depths the targets watch and their temperature at the end (1.1)",
                },
                "properties_source": _TEXT,
                "initial_freezing_C": _NUM_OR_NULL,
                "steps": {**_array(_STEP), "minItems": 1},
                "warnings": _TEXTS,
                "unreliable_reasons": _TEXTS,
                "procplan_version": _TEXT,
                "caution": _TEXT,
                "outcomes": _OUTCOMES,
                "load": _LOAD,
            },
            required=(
                "title",
                "product",
                "geometry",
                "piece_mass_kg",
                "start_temperature_C",
                "end",
                "steps",
                "warnings",
                "unreliable_reasons",
                "procplan_version",
                "caution",
            ),  # fmt: skip
        ),
    },
}


def result_document(result) -> dict[str, Any]:
    """The JSON document of a run (``procplan run --json``): schema name and version, history, summary."""
    from procplan.output.report import history_dict, summary_dict

    return {
        "schema": RESULT_SCHEMA_NAME,
        "schema_version": RESULT_SCHEMA_VERSION,
        "history": history_dict(result),
        "summary": summary_dict(result),
    }


def schema_text() -> str:
    """The schema as indented JSON text.

    >>> '"schema_version"' in schema_text()
    True
    """
    return json.dumps(RESULT_SCHEMA, indent=2, ensure_ascii=False) + "\n"


if __name__ == "__main__":  # pragma: no cover - prints the schema
    print(schema_text(), end="")
