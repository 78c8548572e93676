"""The batched finite-volume path of the variability study against run_plan per sample, and its fall-back."""

from __future__ import annotations

import numpy as np
import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.model import Checks, LethalityCheck, Plan, Product, Step
from procplan.studies.variability import distribution, monte_carlo

# A typical lean-beef composition (common practice, no single source): an input giving Choi–Okos properties
# that depend on temperature, so the engine uses finite volumes.
BEEF = (("water", 0.74), ("protein", 0.22), ("fat", 0.03), ("carbohydrate", 0.0), ("ash", 0.01))


def _beef_plan(steps, checks=None, diameter_m=0.06, start_C=70.0) -> Plan:
    prod = Product("beef", Geometry("cylinder", diameter_m=diameter_m), composition=BEEF)
    return Plan("beef", prod, start_C, tuple(steps), checks=checks or Checks())


DISTS = {
    "start_C": distribution("uniform", 60.0, 75.0),
    "size_factor": distribution("uniform", 0.85, 1.15),
    "h_W_m2K": distribution("lognormal", 25.0, 0.25),
}


def test_chill_batched_agrees_with_run_plan_per_sample(rules_library):
    # Source: the finite-volume accuracy of the single solver's tests (test_finite_volume.py: stop time within
    # 0.3 % of the exact series): the batched path at its own steps against run_plan for the same samples.
    plan = _beef_plan(
        [Step("chill", 8 * 3600.0, 5.0, medium_C=0.0, h_W_m2K=25.0)],
        Checks(cooling_rule="us-food-code-two-stage"),
    )
    kw = {"n_samples": 8, "seed": 4, "corners": False, "library": rules_library}
    batch = monte_carlo(plan, DISTS, **kw)
    run = monte_carlo(plan, DISTS, method="run", executor=None, **kw)
    assert batch.method == "batch" and run.method == "run"
    assert "batched finite volumes" in batch.notes[0]
    tb, tr = (r.samples["time_to_target_min"].to_numpy() for r in (batch, run))
    assert np.all(np.isfinite(tr))
    assert_allclose(tb, tr, rtol=3e-3)
    assert list(batch.samples["rule_passed"]) == list(run.samples["rule_passed"])


def test_cook_lethality_batched_agrees_with_run_plan():
    # Source: as above; F by the general method (Bigelow 1920) on each core history, z = 7.5 K at 70 °C
    # (a common pasteurisation basis, no single source), within 1 % between the two paths.
    plan = _beef_plan(
        [Step("cook", 3 * 3600.0, 72.0, medium_C=85.0, h_W_m2K=400.0)],
        Checks(lethality=LethalityCheck(None, 70.0, 7.5, 2.0)),
        diameter_m=0.05,
        start_C=4.0,
    )
    dists = {"start_C": distribution("uniform", 2.0, 6.0), "h_W_m2K": distribution("uniform", 300.0, 500.0)}
    kw = {"n_samples": 6, "seed": 9, "corners": False}
    batch = monte_carlo(plan, dists, **kw)
    run = monte_carlo(plan, dists, method="run", executor=None, **kw)
    assert batch.method == "batch"
    fb, fr = (r.samples["lethality_F_min"].to_numpy() for r in (batch, run))
    assert np.all(fr > 0)
    assert_allclose(fb, fr, rtol=1e-2)
    assert_allclose(
        batch.samples["time_to_target_min"].to_numpy(),
        run.samples["time_to_target_min"].to_numpy(),
        rtol=3e-3,
    )


def test_falls_back_with_the_reason_and_refuses_batch():
    # Source: the study's contract (procplan/studies/variability.py): a plan the batch cannot run goes to
    # run_plan per sample and says why; method="batch" is refused naming the field.
    steps = [
        Step("chill", 3600.0, None, medium_C=0.0, h_W_m2K=25.0),
        Step("hold", 3600.0, 5.0, medium_C=2.0, h_W_m2K=10.0),
    ]
    plan = _beef_plan(steps, diameter_m=0.03)
    res = monte_carlo(
        plan,
        {"start_C": distribution("uniform", 60.0, 70.0)},
        n_samples=2,
        seed=1,
        corners=False,
        executor=None,
    )
    assert res.method == "run"
    assert any(n.startswith("not batched") and "more than one step" in n for n in res.notes)
    with pytest.raises(InvalidInputError) as e:
        monte_carlo(plan, {"start_C": distribution("uniform", 60.0, 70.0)}, n_samples=2, method="batch")
    assert e.value.field == "method"


def test_batches_on_threads_repeat_and_agree(monkeypatch):
    # Source: the study's contract (same seed, same numbers) and, for the split into batches that each choose
    # their own steps, the finite-volume accuracy as above (0.3 %) between one batch and two.
    import procplan.studies.variability_batch as vb

    plan = _beef_plan([Step("chill", 8 * 3600.0, 5.0, medium_C=0.0, h_W_m2K=25.0)])
    kw = {"n_samples": 40, "seed": 2, "corners": False}
    assert vb.batch_count(999) == 1 and vb.batch_count(10_000) == 4
    one = monte_carlo(plan, DISTS, **kw)
    monkeypatch.setattr(vb, "batch_count", lambda n: 2)
    two = monte_carlo(plan, DISTS, **kw)
    again = monte_carlo(plan, DISTS, **kw)
    assert "2 batch(es)" in two.notes[0]
    assert two.samples.equals(again.samples)
    t1, t2 = (r.samples["time_to_target_min"].to_numpy() for r in (one, two))
    assert_allclose(t2, t1, rtol=3e-3)


def test_invalid_samples_are_left_out_as_on_the_run_path():
    # Source: the study's contract: a sample the engine refuses (here a start above the property table's
    # 150 °C) is counted invalid with the reason, on the batched path as on the run path, the others run.
    plan = _beef_plan([Step("chill", 8 * 3600.0, 5.0, medium_C=0.0, h_W_m2K=25.0)])
    dists = {"start_C": distribution("uniform", 60.0, 200.0)}
    kw = {"n_samples": 6, "seed": 5, "corners": False}
    batch = monte_carlo(plan, dists, **kw)
    run = monte_carlo(plan, dists, method="run", executor=None, **kw)
    assert batch.method == "batch"
    bad = batch.samples["start_C"].to_numpy() > 150.0
    assert 0 < bad.sum() < 6
    assert any(n.startswith(f"{bad.sum()} sample(s) invalid") for n in batch.notes)
    assert any(n.startswith(f"{bad.sum()} sample(s) invalid") for n in run.notes)
    tb, tr = (r.samples["time_to_target_min"].to_numpy() for r in (batch, run))
    assert np.all(np.isnan(tb[bad])) and np.all(np.isnan(tr[bad]))
    assert_allclose(tb[~bad], tr[~bad], rtol=3e-3)


def test_stop_after_the_first_batch_keeps_the_samples_done(monkeypatch):
    # Source: the study's contract (procplan/studies/variability.py, stop): progress after each batch; a stop
    # set then ends the study with the samples done and a note. The kept samples must be exactly the first
    # batch of the same study run to the end (same seed, same batch, same steps).
    import threading

    import procplan.studies.runner as runner
    import procplan.studies.variability_batch as vb

    plan = _beef_plan([Step("chill", 8 * 3600.0, 5.0, medium_C=0.0, h_W_m2K=25.0)])
    kw = {"n_samples": 40, "seed": 2, "corners": False}
    monkeypatch.setattr(vb, "batch_count", lambda n: 2)
    monkeypatch.setattr(runner, "default_workers", lambda: 1)
    full = monte_carlo(plan, DISTS, **kw)
    stop, seen = threading.Event(), []

    def progress(done, total):
        seen.append((done, total))
        stop.set()

    part = monte_carlo(plan, DISTS, progress=progress, stop=stop, **kw)
    assert seen == [(20, 40)]
    assert part.method == "batch" and part.n_samples == 20 and len(part.samples) == 20
    assert any(n.startswith("stopped: 20 of 40 samples done") for n in part.notes)
    assert part.samples.equals(full.samples.iloc[:20])
    assert np.all(np.isfinite(part.samples["time_to_target_min"].to_numpy()))
    assert part.percentiles["time_to_target_min"]["P50"] <= full.samples["time_to_target_min"].max()
    monkeypatch.setattr(runner, "default_workers", lambda: 2)  # on threads: the same first batch is kept
    stop.clear()
    seen.clear()
    threaded = monte_carlo(plan, DISTS, progress=progress, stop=stop, **kw)
    assert seen[0] == (20, 40)
    assert threaded.samples.equals(full.samples.iloc[: threaded.n_samples])
