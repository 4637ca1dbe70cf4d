"""JSON report: the output contract ``{"summary": {...}, "findings": [...]}``."""

from __future__ import annotations

import json

import numpy as np


def _default(value):
    if isinstance(value, np.generic):
        return value.item()
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")


def render(result) -> str:
    """Render an :class:`~vpaudit.audit.AuditResult` as one JSON object."""
    return json.dumps(result.to_dict(), indent=2, default=_default, allow_nan=False) + "\n"
