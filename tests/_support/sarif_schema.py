"""Validation of a SARIF log against the SARIF 2.1.0 JSON schemas (vendored in
tests/data/sarif/, origin in its README) and the independent models of sarif-pydantic."""

from __future__ import annotations

import json
from pathlib import Path

import jsonschema

SCHEMAS = Path(__file__).resolve().parents[1] / "data" / "sarif"


def validate(log: dict) -> None:
    """Assert that ``log`` is a valid SARIF 2.1.0 log by both schemas and sarif-pydantic."""
    from sarif_pydantic import Sarif

    for name, cls in (
        ("sarif-2.1.0-rtm.5.json", jsonschema.Draft4Validator),
        ("sarif-2.1.0.json", jsonschema.Draft202012Validator),
    ):
        schema = json.loads((SCHEMAS / name).read_text(encoding="utf-8"))
        errors = sorted(cls(schema).iter_errors(log), key=lambda e: list(e.path))
        assert not errors, f"{name}: {errors[0].message} at {list(errors[0].path)}"
    Sarif.model_validate(log)
