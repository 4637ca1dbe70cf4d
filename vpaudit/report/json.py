"""JSON report: the output contract ``{"summary": {...}, "findings": [...]}`` (a gate's adds
``"resolved": [...]``, the base's findings the change cleared).
"""

from __future__ import annotations

from collections.abc import Iterator

import numpy as np
import orjson

from ..checks import Severity

#: numpy scalars as numbers; the findings' evidence has no NaN or infinity (those are
#: written as null when a finding is made).
_OPTIONS = orjson.OPT_SERIALIZE_NUMPY


def _default(value):
    if isinstance(value, np.generic):
        return value.item()
    raise TypeError(f"not JSON serialisable: {type(value).__name__}")


def _encode(value) -> bytes:
    return orjson.dumps(value, default=_default, option=_OPTIONS)


#: Findings encoded per chunk: the output is written a chunk at a time, so the memory for
#: the encoded text is one chunk's, reused, whatever the number of findings.
CHUNK = 20_000

#: Rows whose fields are encoded together. orjson gives each text a buffer of a few
#: kilobytes whatever its length, so the fields' texts are kept for this many rows only,
#: until their lines are made.
_FIELD_ROWS = 2_000

#: One finding's line, its fields' JSON texts put in by ``%``: the key order of
#: :meth:`~vpaudit.checks.finding.Finding.to_dict` (and the gate's status last).
_LINE = (
    b'{"check":%b,"severity":%b,"substance":%b,"records":%b,"message":%b,"evidence":%b,'
    b'"suggestion":%b,"location":{"file":%b,"line":%b}}'
)
_LINE_STATUS = _LINE[:-1] + b',"status":%b}'


def _texts(values: list) -> list[bytes]:
    """The JSON text of each of ``values``, texts or tuples of texts, one encoder call each."""
    return list(map(orjson.dumps, values))


def _values(values: list) -> list[bytes]:
    """The JSON text of each of ``values``, any value a finding may carry (numpy numbers
    too), one encoder call each.
    """
    return [_encode(v) for v in values]


def _numbers(values: list) -> list[bytes]:
    """The JSON text of each of ``values``, plain numbers, booleans or None (no commas in
    any of their texts), in one encoder call for all.
    """
    return _encode(values)[1:-1].split(b",") if values else []


def _same(values: list, cache: dict) -> list[bytes]:
    """The JSON text of each of ``values``, which repeat: each distinct one encoded once
    (``cache`` maps a value to its text).
    """
    for v in set(values).difference(cache):
        cache[v] = _encode(str(v) if isinstance(v, Severity) else v)
    return list(map(cache.__getitem__, values))


def _evidence(column, start: int, stop: int) -> list[bytes]:
    """The JSON text of the evidence of rows ``start`` to ``stop``, a column at a time:
    what ``orjson.dumps`` of each row's dict gives, without making the dicts.
    """
    out: list = [None] * (stop - start)
    for at, keys, values, plain in column.groups(np.arange(start, stop)):
        if keys is None:  # dicts given whole
            made = _values(values)
        elif not keys:
            made = [b"{}"] * at.size
        else:
            template = b"{" + b",".join(_encode(k) + b":%b" for k in keys) + b"}"
            texts = [_numbers(v) if p else _values(v) for v, p in zip(values, plain, strict=True)]
            made = [template % row for row in zip(*texts, strict=True)]
        for i, text in zip(at.tolist(), made, strict=True):
            out[i] = text
    return out


#: The fields kept as columns whose values are made when read: made once per chunk.
_MADE = ("substance", "records", "message", "file", "line")


def _lines(
    findings, made: dict[str, list], first: int, start: int, stop: int, status: bool, cache: dict
) -> list[bytes]:
    """The JSON text of rows ``start`` to ``stop`` of ``findings``, one line each: what
    ``orjson.dumps`` of :meth:`~vpaudit.checks.finding.Findings.dicts` gives, made a column
    at a time (each field encoded for the whole chunk, the lines put together by one
    ``%`` each). ``made`` holds the values of the fields of :data:`_MADE` from row
    ``first`` on.
    """
    part = slice(start, stop)
    own = slice(start - first, stop - first)
    fields = [
        _same(findings.check[part], cache),
        _same(findings.severity[part], cache),
        _texts(made["substance"][own]),
        _texts(made["records"][own]),
        _texts(made["message"][own]),
        _evidence(findings.evidence, start, stop),
        [b"null" if s is None else _encode(s) for s in findings.suggestion[part]],
        _same(made["file"][own], cache),
        [b"null" if n is None else b"%d" % n for n in made["line"][own]],
    ]
    if status:
        fields.append(_same([s or "new" for s in findings.status[part]], cache))
        return [_LINE_STATUS % row for row in zip(*fields, strict=True)]
    return [_LINE % row for row in zip(*fields, strict=True)]


def chunks(result) -> Iterator[str]:
    """The JSON text of :func:`render`, in pieces that join to it: the summary, then the
    findings a chunk at a time, one finding per line.
    """
    yield '{"summary": ' + _encode(result.summary_dict()).decode("utf-8") + ',\n"findings": [\n'
    findings = result.findings
    cache: dict = {}  # texts that repeat: checks, severities, files, statuses
    n = len(findings)
    for a in range(0, n, CHUNK):
        stop = min(a + CHUNK, n)
        rows = np.arange(a, stop)
        made = {name: getattr(findings, name).values(rows) for name in _MADE}
        lines: list[bytes] = []
        for b in range(a, stop, _FIELD_ROWS):
            end = min(b + _FIELD_ROWS, stop)
            lines += _lines(findings, made, a, b, end, result.gated, cache)
        text = b",\n".join(lines)
        yield (b",\n" + text if a else text).decode("utf-8")
    if result.gated:  # what the change cleared, after what it left
        resolved = b",\n".join(_encode(d) for d in result.resolved_dicts()).decode("utf-8")
        yield f'\n],\n"resolved": [\n{resolved}\n]}}\n' if resolved else '\n],\n"resolved": []}\n'
        return
    yield "\n]}\n"


def render(result) -> str:
    """Render an :class:`~vpaudit.auditing.AuditResult` as one JSON object.

    One finding per line: readable and diff-friendly. Written with orjson (several times
    faster than the standard library's encoder); the command line writes :func:`chunks` as
    they come (measurements: docs/performance.md).
    """
    return "".join(chunks(result))
