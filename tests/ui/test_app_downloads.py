"""Downloads of the app read back: the workbook with openpyxl/pandas, the result JSON against its schema, the
comparison's workbook and table of differing inputs. Numbers are compared with the library's run."""

from __future__ import annotations

import io
import json

import pandas as pd
import pytest
from numpy.testing import assert_allclose

from tests.ui.test_app import go, library_result, number_input


def _button_keys(at) -> set[str]:
    return {getattr(b, "key", None) for b in at.get("download_button")}


def test_files_page_offers_workbook_json_and_schema(app, library_copy):
    from procplan.ui import adapter_outputs

    go(app, "Sheet & files")
    assert {"dl_xlsx", "dl_json", "dl_schema", "dl_csv", "dl_plan"} <= _button_keys(app)
    text = app.session_state["last_good_toml"]
    ref = library_result(library_copy)
    book = pd.read_excel(io.BytesIO(adapter_outputs.run_xlsx(text, 0, "C", "min")), sheet_name=None)
    assert_allclose(book["History"]["core [°C]"], ref.history["core_C"], rtol=1e-12)
    doc = json.loads(adapter_outputs.result_json(text, 0))
    jsonschema = pytest.importorskip("jsonschema")
    jsonschema.validate(doc, json.loads(adapter_outputs.result_schema_json()))
    assert doc["summary"]["end"]["core_C"] == pytest.approx(float(ref.history["core_C"].iloc[-1]))


def test_comparison_lists_what_differs_and_downloads(app):
    from tests.ui.test_app import _open_vial

    _open_vial(app)
    app.button(key="scen_add").click().run()
    go(app, "Process")
    number_input(app, "Air temperature").set_value(2.0).run()
    go(app, "Compare & studies")
    assert not app.exception
    diff = app.dataframe[1].value
    assert len(diff) == 1 and "air" in diff.index[0] and "settings" in diff.index[0]
    assert {"scen_xlsx", "scen_csv"} <= _button_keys(app)
