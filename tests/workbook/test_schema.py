"""The schema: one settings table covering every Settings field, and value checks a dialog can use."""
from __future__ import annotations

import subprocess
import sys
from dataclasses import fields
from pathlib import Path

import pytest

from secretary.model.records import Settings
from secretary.workbook import schema


def test_every_settings_field_has_one_row_with_the_records_default():
    assert [s.field for s in schema.SETTINGS_TABLE] == [f.name for f in fields(Settings)]
    for spec in schema.SETTINGS_TABLE:
        assert spec.default == getattr(Settings(), spec.field)
        assert spec.explanation.endswith(".") and len(spec.explanation) < 200
    labels = [s.label for s in schema.SETTINGS_TABLE]
    assert len(set(map(str.casefold, labels))) == len(labels)
    # the labels the workbook contract names
    assert {"Centre", "Scale", "Skill spread", "Half-life (days)", "Longest race", "Date order"} <= set(labels)


def test_defaults_are_allowed_values():
    for spec in schema.SETTINGS_TABLE:
        assert schema.validate_setting(spec.label, spec.default) == (spec.default, None), spec.label


@pytest.mark.parametrize("label, raw, expected", [
    ("Centre", 1600, 1600.0),
    ("centre", "1600", 1600.0),
    ("  CENTER ", 1600.0, 1600.0),
    ("Half-life (days)", 0, 0.0),
    ("half life", "180", 180.0),
    ("half_life_days", 90, 90.0),
    ("Longest race", 7.0, 7),
    ("Date order", "Month First", "month-first"),
    ("Date order", "day_first", "day-first"),
    ("Paper", "letter", "Letter"),
    ("League name", "  Riverside   Cue League ", "Riverside Cue League"),
    ("League name", 1904, "1904"),
    ("Weakly linked below", 0.25, 0.25),
    ("Skill spread", None, Settings().skill_spread),
    ("Scale", "   ", Settings().scale),
])
def test_good_values(label, raw, expected):
    value, error = schema.validate_setting(label, raw)
    assert error is None
    assert value == expected and type(value) is type(expected)


@pytest.mark.parametrize("label, raw, says", [
    ("Centre", -5, "from 0 to 10000"),
    ("Scale", "wide", "a number from 10 to 2000"),
    ("Longest race", 7.5, "whole number"),
    ("Linking matches to suggest", 51, "from 0 to 50"),
    ("Weakly linked below", 1.5, "from 0 to 1"),
    ("Half-life (days)", float("nan"), "number"),
    ("Few games", True, "number"),
    ("Date order", "yesterday", "day-first or month-first"),
    ("Paper", "A3", "A4 or Letter"),
    ("League name", "x" * 101, "100 characters"),
    ("Colour", "green", "not a setting"),
])
def test_bad_values_say_what_is_allowed(label, raw, says):
    value, error = schema.validate_setting(label, raw)
    assert value is None
    assert says in error


def test_input_sheets_and_outputs_are_distinct():
    names = [s.name for s in schema.INPUT_SHEETS] + list(schema.OUTPUT_SHEETS)
    assert len({schema.header_key(n) for n in names}) == len(names)
    assert schema.STATE_SHEET == "_secretary_state"
    assert [c.header for c in schema.RESULTS.required_columns] == [
        "Date", "Division", "Player A", "Player B", "Games A", "Games B"]  # workbook.md, Results
    assert schema.header_key("  player   A ") == schema.header_key("Player A")


def test_schema_imports_without_openpyxl():
    root = Path(__file__).resolve().parents[2]
    code = "import sys, secretary.workbook.schema; print('openpyxl' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], cwd=root, capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False", out.stderr


def test_a_renamed_setting_keeps_its_old_name_when_reading():
    from secretary.workbook import schema

    assert schema.find_setting("Held by the prior at z").field == "held_z"  # the earlier name
    assert schema.find_setting("Held back from").field == "held_z"
