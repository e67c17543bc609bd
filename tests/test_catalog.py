"""Tests of the bundled catalogue files, read with stdlib tomllib.

The format: top-level ``name`` (string, required) and ``description``
(string, optional); ``[[items]]`` tables with ``id`` (string, required,
unique), ``mass_g`` (float > 0, required), ``stock`` (int >= 0, optional) and
``description`` (string, optional), ``mass_tol_g`` or ``mass_tol_pct``
(float >= 0, optional); no other keys.  (The drill catalogues, with
``removes``, are checked in test_rework.py.)
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest

from placer.stockparts import ISO_7089_NORMAL, washer_mass_g

CATALOG_DIR = Path(__file__).resolve().parent.parent / "catalogs"
BUNDLED = ["washers-steel.toml", "fan-blade-clips.toml", "rim-clips-5g.toml",
           "adhesive-segments.toml"]
TOP_KEYS_REQUIRED = {"name", "items"}
TOP_KEYS_ALLOWED = {"name", "description", "items"}
ITEM_KEYS_REQUIRED = {"id", "mass_g"}
ITEM_KEYS_ALLOWED = {"id", "mass_g", "mass_oz", "stock", "description", "fixing", "mass_tol_g",
                     "mass_tol_oz", "mass_tol_pct"}

# The washers file's masses are washer_mass_g of the ISO 7089 table rounded to
# 0.01 g, so they agree with the unrounded value to half a unit: 0.005 g.
WASHER_ROUNDING_TOL_G = 0.005


def load(name: str) -> dict:
    with (CATALOG_DIR / name).open("rb") as handle:
        return tomllib.load(handle)


@pytest.mark.parametrize("name", BUNDLED)
def test_catalog_shape(name: str) -> None:
    data = load(name)
    assert TOP_KEYS_REQUIRED <= set(data) <= TOP_KEYS_ALLOWED
    assert isinstance(data["name"], str) and data["name"].strip()
    assert isinstance(data.get("description", ""), str)
    items = data["items"]
    assert isinstance(items, list) and items
    for item in items:
        assert ITEM_KEYS_REQUIRED <= set(item) <= ITEM_KEYS_ALLOWED, item
        assert isinstance(item["id"], str) and item["id"].strip(), item
        mass_g = item["mass_g"]
        assert isinstance(mass_g, float), item
        assert math.isfinite(mass_g) and mass_g > 0.0, item
        if "stock" in item:
            stock = item["stock"]
            assert isinstance(stock, int) and not isinstance(stock, bool), item
            assert stock >= 0, item
        assert isinstance(item.get("description", ""), str), item


@pytest.mark.parametrize("name", BUNDLED)
def test_ids_unique(name: str) -> None:
    ids = [item["id"] for item in load(name)["items"]]
    assert len(ids) == len(set(ids))


@pytest.mark.parametrize("name", BUNDLED)
def test_scenario_named(name: str) -> None:
    # Demo data is set in the invented Wrenmoor shop (project rules).
    assert "Wrenmoor" in load(name)["name"]


def test_washer_masses_derived_from_table() -> None:
    items = load("washers-steel.toml")["items"]
    # Ids are the ISO 7089 size names, so each maps to its table row.
    assert [item["id"] for item in items] == ["M6", "M8", "M10", "M12", "M16"]
    for item in items:
        row = ISO_7089_NORMAL[item["id"]]
        derived_g = washer_mass_g(row.inner_diameter_mm, row.outer_diameter_mm,
                                  row.thickness_mm)
        assert item["mass_g"] == pytest.approx(derived_g, abs=WASHER_ROUNDING_TOL_G), item
        assert item["mass_g"] == round(derived_g, 2), item


def test_washer_file_names_its_derivation() -> None:
    text = (CATALOG_DIR / "washers-steel.toml").read_text(encoding="utf-8")
    assert "placer.stockparts.washer_mass_g" in text
    # Stack depth note: common practice, no source (REFERENCES.md, "Stock parts").
    assert "2-3 deep" in text


def test_rim_clips_are_5_to_60_in_5g_steps() -> None:
    # REFERENCES.md, "Stock parts": metric clip-ons usually in 5 g steps from 5 to 60 g
    # (common practice, no source).
    masses = sorted(item["mass_g"] for item in load("rim-clips-5g.toml")["items"])
    assert masses == [float(m) for m in range(5, 65, 5)]


def test_fan_blade_clips_range() -> None:
    masses = sorted(item["mass_g"] for item in load("fan-blade-clips.toml")["items"])
    assert masses[0] == 2.0 and masses[-1] == 40.0
    assert len(masses) == len(set(masses)) == 8


def test_adhesive_segments_made_of_5g_and_10g() -> None:
    # REFERENCES.md, "Stock parts": adhesive strips of 5 g and 10 g segments
    # (common practice, no source): both single segments are stocked and every
    # strip is a whole number of 5 g.
    masses = [item["mass_g"] for item in load("adhesive-segments.toml")["items"]]
    assert {5.0, 10.0} <= set(masses)
    for mass_g in masses:
        assert mass_g % 5.0 == 0.0, mass_g
