"""JSON report: the output contract ``{"summary": {...}, "findings": [...]}``."""

from __future__ import annotations

import json

import numpy as np


def _default(value):
    if isinstance(value, np.generic):
        return value.item()
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")


_ENCODER = json.JSONEncoder(default=_default, allow_nan=False)


def render(result) -> str:
    """Render an :class:`~vpaudit.audit.AuditResult` as one JSON object.

    One finding per line: readable, diff-friendly, and written by the C encoder (which
    Python's json uses only without ``indent``).
    """
    data = result.to_dict()
    findings = ",\n".join(map(_ENCODER.encode, data["findings"]))
    summary = _ENCODER.encode(data["summary"])
    return f'{{"summary": {summary},\n"findings": [\n{findings}\n]}}\n'
