"""Biot and Fourier numbers and the regime bands."""

from __future__ import annotations

import pytest
from numpy.testing import assert_allclose

from procplan.conduction.regime import (
    LUMPED_BI_MAX,
    SURFACE_CONTROLLED_BI_MIN,
    biot_number,
    classify_regime,
    fourier_number,
)
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry, geometry_from_mm


def test_groups_of_the_brass_plate_example():
    # Source: Çengel & Ghajar, Heat and Mass Transfer, ch. 4, Example 4-4 (from memory): 40 mm brass plate,
    # L = 0.02 m, h = 120 W/m²K, k = 110 W/mK, α = 33.9e-6 m²/s, t = 7 min: Bi = 0.0218, Fo = 35.6 (book's
    # rounding: 3 significant figures).
    assert_allclose(biot_number(120.0, 0.02, 110.0), 0.0218, atol=5e-5)
    assert_allclose(fourier_number(33.9e-6, 7 * 60.0, 0.02), 35.6, atol=0.05)


def test_thermocouple_of_incropera_example_5_1_is_lumped():
    # Source: Incropera et al., 7th ed., Example 5.1 (from memory): D = 0.706 mm, h = 400 W/m²K, k = 20 W/mK,
    # Bi = h (r_o/3)/k = 2.35e-3, so the lumped model applies.
    r = classify_regime(400.0, Geometry("sphere", diameter_m=0.706e-3), 20.0)
    assert r.regime == "lumped"
    assert_allclose(r.bi_lumped, 2.35e-3, atol=5e-6)
    assert_allclose(r.bi, 3 * r.bi_lumped, rtol=1e-12)  # radius = 3 V/A for a sphere
    assert "lumped" in r.reason and "W/m²K" in r.reason


def test_band_edges_follow_the_published_thresholds():
    # Source: Singh & Heldman, Introduction to Food Engineering, 5th ed., ch. 4 (bands 0.1 and 40), and
    # Incropera et al., 7th ed., §5.2 (Bi_c < 0.1 on L_c = V/A). Slab 2L = 60 mm, k = 0.5: V/A = L = 30 mm.
    g = Geometry("slab", thickness_m=0.06)
    k = 0.5
    h_edge = LUMPED_BI_MAX * k / 0.03
    assert classify_regime(h_edge * 0.999, g, k).regime == "lumped"
    assert classify_regime(h_edge * 1.001, g, k).regime == "distributed"
    h_40 = SURFACE_CONTROLLED_BI_MIN * k / 0.03
    assert classify_regime(h_40, g, k).regime == "distributed"
    assert classify_regime(h_40 * 1.001, g, k).regime == "surface-controlled"


def test_reason_reads_like_a_technologist_note():
    r = classify_regime(25.0, geometry_from_mm("slab", thickness_mm=60), 0.47)
    assert r.reason.startswith("Bi = 1.6 from h = 25 W/m²K, half-thickness 30 mm, k = 0.47 W/mK: ")
    assert r.reason.endswith("distributed solution")


@pytest.mark.parametrize(
    "geometry,word,length_mm",
    [
        (geometry_from_mm("brick", length_mm=200, width_mm=120, height_mm=50), "half-height", 25.0),
        (geometry_from_mm("finite-cylinder", diameter_mm=85, length_mm=240), "radius", 42.5),
        (geometry_from_mm("finite-cylinder", diameter_mm=100, length_mm=20), "half-length", 10.0),
        (geometry_from_mm("slab", thickness_mm=40, faces=1), "thickness (one face exposed)", 40.0),
    ],
)
def test_conduction_length_is_the_smallest_axis(geometry, word, length_mm):
    r = classify_regime(500.0, geometry, 0.5)
    assert_allclose(r.conduction_length_m, length_mm / 1000.0, rtol=1e-12)
    assert_allclose(r.bi, 500.0 * length_mm / 1000.0 / 0.5, rtol=1e-12)
    assert_allclose(r.bi_lumped, 500.0 * geometry.volume_m3 / geometry.area_m2 / 0.5, rtol=1e-12)
    assert f"{word} {length_mm:g} mm" in r.reason


@pytest.mark.parametrize(
    "call,field",
    [
        (lambda: classify_regime(0.0, Geometry("sphere", diameter_m=0.05), 0.5), "h_W_m2K"),
        (lambda: classify_regime(-3.0, Geometry("sphere", diameter_m=0.05), 0.5), "h_W_m2K"),
        (lambda: classify_regime(10.0, Geometry("sphere", diameter_m=0.05), 0.0), "k_W_mK"),
        (lambda: classify_regime(float("nan"), Geometry("sphere", diameter_m=0.05), 0.5), "h_W_m2K"),
        (lambda: classify_regime(10.0, "sphere", 0.5), "geometry"),
        (lambda: classify_regime(10.0, Geometry("sphere", diameter_m=-0.05), 0.5), "product.diameter_mm"),
        (lambda: biot_number(10.0, 0.0, 0.5), "length_m"),
        (lambda: fourier_number(1e-7, -1.0, 0.01), "time_s"),
        (lambda: fourier_number(0.0, 10.0, 0.01), "alpha_m2_s"),
    ],
)
def test_bad_input_names_the_field(call, field):
    with pytest.raises(InvalidInputError) as e:
        call()
    assert e.value.field == field
