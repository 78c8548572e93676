"""The result JSON of ``procplan run --json`` against its published, versioned JSON Schema.

The validator is the jsonschema package (a PyPI reference implementation of JSON Schema draft 2020-12),
independent of procplan; every demo plan's document must validate, and documents that break the schema's
promises (a missing field, a wrong type, a NaN written as a string) must not.
"""

from __future__ import annotations

import contextlib
import copy
import io
import json

import pytest

jsonschema = pytest.importorskip("jsonschema")

from procplan.cli.main import main  # noqa: E402
from procplan.files.library import load_library  # noqa: E402
from procplan.output.result_schema import (  # noqa: E402
    RESULT_SCHEMA,
    RESULT_SCHEMA_NAME,
    RESULT_SCHEMA_VERSION,
    schema_text,
)

DEMO_PLANS = sorted(load_library().plans)


def _validator():
    cls = jsonschema.Draft202012Validator
    cls.check_schema(RESULT_SCHEMA)
    return cls(RESULT_SCHEMA)


@pytest.fixture(scope="module")
def documents():
    """The JSON each demo plan prints (run once per module)."""
    out = {}
    for name in DEMO_PLANS:
        buf = io.StringIO()
        with contextlib.redirect_stdout(buf):
            code = main(["run", name, "--json"])
        assert code == 0, name
        out[name] = json.loads(buf.getvalue())
    return out


def test_the_schema_is_valid_draft_2020_12_and_round_trips_as_text():
    jsonschema.Draft202012Validator.check_schema(RESULT_SCHEMA)
    assert json.loads(schema_text()) == RESULT_SCHEMA


@pytest.mark.parametrize("name", DEMO_PLANS)
def test_every_demo_plan_validates(documents, name):
    doc = documents[name]
    errors = sorted(_validator().iter_errors(doc), key=lambda e: list(e.path))
    assert not errors, [f"{list(e.path)}: {e.message}" for e in errors[:5]]
    assert doc["schema"] == RESULT_SCHEMA_NAME and doc["schema_version"] == RESULT_SCHEMA_VERSION
    # invariant: every history column has one entry per time point
    lengths = {k: len(v) for k, v in doc["history"].items()}
    assert len(set(lengths.values())) == 1, lengths


def test_documents_that_break_the_schema_are_refused(documents):
    doc = documents[DEMO_PLANS[0]]
    v = _validator()
    broken = []
    d = copy.deepcopy(doc)
    del d["summary"]["steps"]
    broken.append(d)
    d = copy.deepcopy(doc)
    d["summary"]["piece_mass_kg"] = "NaN"
    broken.append(d)
    d = copy.deepcopy(doc)
    d["schema_version"] = "2.0"
    broken.append(d)
    d = copy.deepcopy(doc)
    d["history"]["core_C"] = ["hot"]
    broken.append(d)
    d = copy.deepcopy(doc)
    d["summary"]["outcomes"]["energy"]["pieces"] = None
    broken.append(d)
    for d in broken:
        assert not v.is_valid(d)
