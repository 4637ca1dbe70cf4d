"""Validation of a JSON report against ``schemas/report.schema.json`` with jsonschema's
Draft 2020-12 validator (independent of the pydantic models the schema is generated from)."""

from __future__ import annotations

import json
from pathlib import Path

import jsonschema

SCHEMA = Path(__file__).resolve().parents[2] / "schemas" / "report.schema.json"


def validate_report(report: dict) -> None:
    """Assert that ``report`` (an audit's or a gate's JSON, parsed) meets the schema."""
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    validator = jsonschema.Draft202012Validator(schema)
    errors = sorted(validator.iter_errors(report), key=lambda e: list(e.path))
    assert not errors, f"{errors[0].message} at {list(errors[0].path)}"
