"""One batch in words, the same in the summary text and on the Result page (output.report.batch_label)."""

from __future__ import annotations

from types import SimpleNamespace

from procplan.output.report import batch_label


def _result(batch: int, packing=None):
    return SimpleNamespace(outcomes=SimpleNamespace(energy=SimpleNamespace(pieces=batch)), packing=packing)


def test_pieces_and_packed_loads_are_counted_in_their_own_units():
    assert batch_label(_result(60)) == "60 pieces"
    assert batch_label(_result(1)) == "1 piece"
    carton = SimpleNamespace(load=SimpleNamespace(arrangement="case", pieces=200))
    # 5000 vials in cartons of 200: the energy outcome counts 25 loads
    assert batch_label(_result(25, carton)) == "25 cases (5000 pieces)"
    assert batch_label(_result(1, carton)) == "1 case (200 pieces)"
