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


def _encode(value) -> bytes:
    return orjson.dumps(value, default=_default, option=_OPTIONS)


def render(result) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` as one JSON object.

    One finding per line: readable and diff-friendly. Written with orjson, about six times
    faster than the standard library's encoder (0.1 s instead of 0.6 s for the 87 000
    findings of a million-substance table), each finding encoded as its dict is made and
    the lines joined as bytes (0.24-0.28 s against 0.32-0.35 s for all the findings'
    dicts first and a text per line, at 10^6 substances).
    """
    lines = b",\n".join([_encode(result.finding_dict(f)) for f in result.findings])
    summary = _encode(result.summary_dict())
    return (b'{"summary": ' + summary + b',\n"findings": [\n' + lines + b"\n]}\n").decode("utf-8")
