"""Catalogue sweep: rows equal single runs of the same pairs, whatever executor runs them."""

from __future__ import annotations

import importlib.util
from concurrent.futures import ProcessPoolExecutor

import pytest

from procplan.errors import InvalidInputError
from procplan.files.library import load_library
from procplan.run.engine import run_plan
from procplan.studies.metrics import result_metrics
from procplan.studies.sweep import KIND_TASKS, pair_plan, sweep_catalogue
from procplan.surface.ranges import EQUIPMENT_KINDS

PRODUCTS = ["vaccine-vial-10ml", "beef-meatball"]
MACHINES = ["pharma-cr1", "chiller-b1", "oven-c1"]


@pytest.fixture(scope="module")
def lib():
    return load_library()


@pytest.fixture(scope="module")
def sequential(lib):
    return sweep_catalogue(lib, products=PRODUCTS, equipment=MACHINES, n_nodes=8)


def _key_figures(row):
    return {k: row[k] for k in ("time_to_target_min", "rule_passed", "energy_removed_kWh", "solvers")}


def test_rows_equal_single_runs(lib, sequential):
    tab = sequential.table
    assert len(tab) == len(PRODUCTS) * len(MACHINES) and (tab["error"] == "").all()
    for _, row in tab.iterrows():
        plan = pair_plan(lib.products[row["product"]], lib.equipment[row["equipment"]], lib)
        direct = result_metrics(run_plan(plan, library=lib, n_nodes=8))
        assert _key_figures(row) == pytest.approx(_key_figures(direct), nan_ok=True)
    # the kind's task is what ran
    oven = tab[tab["equipment"] == "oven-c1"].iloc[0]
    assert oven["process"] == "heating" and oven["target_C"] == KIND_TASKS["convection-oven"].target_C


def test_a_drying_pair_reports_the_weight_loss_of_its_single_run(lib, sequential):
    # the unwrapped meatball in the convection oven (dew point set) dries: the sweep's weight loss and yield are
    # the single run's outcomes, and 100 − yield; pairs that dry nothing leave the columns empty
    tab = sequential.table
    row = tab[(tab["product"] == "beef-meatball") & (tab["equipment"] == "oven-c1")].iloc[0]
    plan = pair_plan(lib.products["beef-meatball"], lib.equipment["oven-c1"], lib)
    res = run_plan(plan, library=lib, n_nodes=8)
    assert row["yield_percent"] == pytest.approx(res.outcomes.yield_percent, rel=1e-12)
    # Invariant (mass balance of one step): the yield is the mass left after the step's evaporated water; for
    # the unwrapped meat the lower yield also drains the juice its heated proteins expel (run.drip)
    drying, drip = res.steps[0].drying, res.steps[0].drip
    assert row["weight_loss_percent"] == pytest.approx(drying.weight_loss_percent, rel=1e-9)
    assert row["weight_loss_percent"] + row["yield_percent"] == pytest.approx(100.0)
    assert row["cook_loss_upper_percent"] == pytest.approx(
        drying.weight_loss_percent + drip.drainable_juice_percent, rel=1e-9
    )
    assert row["cook_loss_upper_percent"] + row["yield_lower_percent"] == pytest.approx(100.0)
    assert row["weight_loss_percent"] <= row["cook_loss_upper_percent"]
    assert 0.0 < row["weight_loss_percent"] < 30.0 and row["weight_stop_min"] != row["weight_stop_min"]
    vial = tab[tab["product"] == "vaccine-vial-10ml"]
    assert vial["yield_percent"].isna().all()
    assert list(tab.columns)[-6:] == [
        "weight_loss_percent",
        "yield_percent",
        "cook_loss_upper_percent",
        "yield_lower_percent",
        "weight_stop_min",
        "error",
    ]


def test_process_pool_gives_the_same_table(lib, sequential):
    with ProcessPoolExecutor(max_workers=2) as ex:
        par = sweep_catalogue(lib, products=PRODUCTS, equipment=MACHINES, n_nodes=8, executor=ex)
    assert par.table.drop(columns=["warnings"]).equals(sequential.table.drop(columns=["warnings"]))


@pytest.mark.skipif(importlib.util.find_spec("dask") is None, reason="dask is not installed")
def test_dask_client_runs_unchanged(lib, sequential):
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError as exc:  # pragma: no cover
        pytest.skip(f"dask.distributed cannot be imported: {exc}")
    with (
        LocalCluster(n_workers=1, processes=False, dashboard_address=None) as cluster,
        Client(cluster) as client,
    ):
        res = sweep_catalogue(lib, products=PRODUCTS[:1], equipment=MACHINES, n_nodes=8, executor=client)
    seq = sequential.table[sequential.table["product"] == PRODUCTS[0]].reset_index(drop=True)
    assert res.table["time_to_target_min"].tolist() == pytest.approx(
        seq["time_to_target_min"].tolist(), nan_ok=True
    )


def test_every_kind_has_a_task_and_errors_name_fields(lib):
    assert set(KIND_TASKS) == set(EQUIPMENT_KINDS)
    with pytest.raises(InvalidInputError, match="products"):
        sweep_catalogue(lib, products=["nope"])
    with pytest.raises(InvalidInputError, match="kinds"):
        sweep_catalogue(lib, kinds=["toaster"])
    r = sweep_catalogue(
        lib, products=PRODUCTS[:1], equipment=["oven-c1", "pharma-cr1"], kinds=["pharma-cold-room"]
    )
    assert list(r.table["equipment"]) == ["pharma-cr1"] and r.skipped == ("oven-c1 (convection-oven)",)


def test_a_pairs_step_is_named_in_words_not_by_the_machines_file_key(lib):
    # What users read in the sweep table and warnings: the task and the machine's kind, as the library
    # describes it; the machine's file key (e.g. "chiller-b1") is left to the Machine column's full name.
    for key, equipment in lib.equipment.items():
        plan = pair_plan(lib.products[PRODUCTS[0]], equipment, lib)
        name = plan.steps[0].name
        assert key not in name and "-" not in name, name
        assert name.endswith(equipment.kind.replace("-", " ")), name
