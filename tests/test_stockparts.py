"""Tests of placer.stockparts: washer masses from ISO 7089 dimensions."""

from __future__ import annotations

import dataclasses
import math

import pytest

from placer.errors import InputError
from placer.stockparts import (
    ISO_7089_NORMAL,
    STEEL_DENSITY_G_CM3,
    WasherSize,
    washer_mass_g,
)

# REFERENCES.md prints the washer masses to 0.01 g, so a printed figure stands
# for anything within half a unit of its last digit (0.005 g); 0.006 g allows
# for the float rounding on top of that.
PRINTED_MASS_TOL_G = 0.006


@pytest.mark.parametrize(
    ("size", "dims_mm", "printed_mass_g"),
    [
        # Source: REFERENCES.md [ISO7089]: ISO 7089 M8, 8.4/16/1.6 mm,
        # steel 7.85 g/cm3, about 1.83 g (recomputed: 1.82929 g).
        ("M8", (8.4, 16.0, 1.6), 1.83),
        # Source: REFERENCES.md [ISO7089]: ISO 7089 M10, 10.5/20/2 mm,
        # steel 7.85 g/cm3, about 3.57 g (recomputed: 3.57284 g).
        ("M10", (10.5, 20.0, 2.0), 3.57),
        # Source: REFERENCES.md [ISO7089]: ISO 7089 M12, 13/24/2.5 mm,
        # steel 7.85 g/cm3, about 6.27 g (recomputed: 6.27327 g).
        ("M12", (13.0, 24.0, 2.5), 6.27),
    ],
)
def test_published_washer_masses(size: str, dims_mm: tuple[float, float, float],
                                 printed_mass_g: float) -> None:
    assert washer_mass_g(*dims_mm) == pytest.approx(printed_mass_g, abs=PRINTED_MASS_TOL_G)
    table = ISO_7089_NORMAL[size]
    assert washer_mass_g(table.inner_diameter_mm, table.outer_diameter_mm,
                         table.thickness_mm) == pytest.approx(printed_mass_g,
                                                              abs=PRINTED_MASS_TOL_G)


@pytest.mark.parametrize(
    ("size", "dims_mm"),
    [
        # Source: REFERENCES.md [ISO7089] (ISO 7089 normal series).
        ("M8", (8.4, 16.0, 1.6)),
        ("M10", (10.5, 20.0, 2.0)),
        ("M12", (13.0, 24.0, 2.5)),
    ],
)
def test_table_matches_references(size: str, dims_mm: tuple[float, float, float]) -> None:
    assert dataclasses.astuple(ISO_7089_NORMAL[size]) == dims_mm


def test_steel_density_matches_references() -> None:
    # Source: REFERENCES.md [ISO7089]: steel 7.85 g/cm3.
    assert STEEL_DENSITY_G_CM3 == 7.85


def test_made_up_ring_against_hand_computed_annulus() -> None:
    # Hand computation (elementary geometry, made-up ring d = 6 mm, D = 10 mm, h = 2 mm):
    # V = pi/4 * (10^2 - 6^2) * 2 = pi/4 * 64 * 2 = 32*pi mm3 = 0.032*pi cm3.
    volume_cm3 = 32.0 * math.pi / 1000.0
    # Unit density gives the volume in cm3 as grams.
    assert washer_mass_g(6.0, 10.0, 2.0, density_g_cm3=1.0) == pytest.approx(volume_cm3,
                                                                              rel=1e-12)
    # Default density is steel: 7.85 * 0.032*pi = 0.789168 g.
    assert washer_mass_g(6.0, 10.0, 2.0) == pytest.approx(7.85 * volume_cm3, rel=1e-12)
    assert washer_mass_g(6.0, 10.0, 2.0) == pytest.approx(0.789168, abs=5e-7)


def test_mass_scales_linearly_with_thickness_and_density() -> None:
    # The annulus volume is proportional to h; the mass to rho (formula above).
    base = washer_mass_g(6.0, 10.0, 2.0, density_g_cm3=2.0)
    assert washer_mass_g(6.0, 10.0, 4.0, density_g_cm3=2.0) == pytest.approx(2.0 * base)
    assert washer_mass_g(6.0, 10.0, 2.0, density_g_cm3=6.0) == pytest.approx(3.0 * base)


def test_table_rows_are_valid_washers() -> None:
    assert set(ISO_7089_NORMAL) == {"M5", "M6", "M8", "M10", "M12", "M16", "M20"}
    for size, row in ISO_7089_NORMAL.items():
        assert isinstance(row, WasherSize)
        assert 0.0 < row.inner_diameter_mm < row.outer_diameter_mm, size
        assert row.thickness_mm > 0.0, size
        # The bore clears the bolt: inner diameter above the nominal thread size.
        assert row.inner_diameter_mm > float(size[1:]), size


def test_washer_size_is_frozen() -> None:
    with pytest.raises(dataclasses.FrozenInstanceError):
        ISO_7089_NORMAL["M8"].thickness_mm = 3.0  # type: ignore[misc]


@pytest.mark.parametrize(
    ("args", "key"),
    [
        ((0.0, 16.0, 1.6), "inner_diameter_mm"),
        ((-1.0, 16.0, 1.6), "inner_diameter_mm"),
        ((8.4, 0.0, 1.6), "outer_diameter_mm"),
        ((8.4, 16.0, 0.0), "thickness_mm"),
        ((8.4, 16.0, -1.6), "thickness_mm"),
        ((8.4, 16.0, 1.6, 0.0), "density_g_cm3"),
        ((8.4, 16.0, 1.6, -7.85), "density_g_cm3"),
        ((float("nan"), 16.0, 1.6), "inner_diameter_mm"),
        ((8.4, float("inf"), 1.6), "outer_diameter_mm"),
        (("8.4", 16.0, 1.6), "inner_diameter_mm"),
        ((8.4, 16.0, True), "thickness_mm"),
        ((16.0, 8.4, 1.6), "outer_diameter_mm"),
        ((8.4, 8.4, 1.6), "outer_diameter_mm"),
    ],
)
def test_bad_input_raises_value_error(args: tuple, key: str) -> None:
    with pytest.raises(ValueError, match=key) as info:
        washer_mass_g(*args)
    assert isinstance(info.value, InputError)
    assert info.value.key == key
