"""JSON files: numbers kept as their text, NaN, Infinity and duplicate keys refused."""

from __future__ import annotations

import json
import re

from .lines import line_at, line_starts
from .raw import (
    MAX_COLUMNS,
    RawFrame,
    decode_text,
    error_at,
    no_surrogate,
)


def _no_constant(name: str):
    raise ValueError(f"{name} is not a number vpaudit reads; leave the field empty")


def _pairs(pairs):
    out = {}
    for k, v in pairs:
        if k in out:
            raise ValueError(f"field {k!r} is given twice in one object")
        out[k] = v
    return out


def read_json(path: str, data: bytes) -> RawFrame:
    """Read a JSON list of objects, or an object with one key holding that list.

    Numbers keep their exact text; ``NaN``/``Infinity`` and duplicate keys are errors; each
    item's line is where its object starts.
    """
    text = decode_text(path, data)
    starts = line_starts(text)
    decoder = json.JSONDecoder(
        parse_float=str, parse_int=str, parse_constant=_no_constant, object_pairs_hook=_pairs
    )
    stripped = text.lstrip()
    if not stripped:
        raise error_at(path, "file is empty: expected a list of objects")
    hint = None
    pos = len(text) - len(stripped)
    if stripped.startswith("{"):
        m = re.match(r'\{\s*"(records|references|points)"\s*:\s*\[', stripped)
        if not m:
            raise error_at(
                path,
                "expected a list of objects, or an object with one key "
                "'records', 'references' or 'points' holding that list",
                1,
            )
        hint = m.group(1)
        pos += m.end() - 1
    elif not stripped.startswith("["):
        raise error_at(path, "expected a list of objects", 1)
    # Walk the array item by item, so each item's line is known.
    items, lines = [], []
    i = pos + 1
    n = len(text)
    ws = re.compile(r"[ \t\r\n]*")
    try:
        i = ws.match(text, i).end()
        if i < n and text[i] == "]":
            i += 1
        else:
            while True:
                i = ws.match(text, i).end()
                obj, end = decoder.raw_decode(text, i)
                items.append(obj)
                lines.append(line_at(starts, i))
                i = ws.match(text, end).end()
                if i < n and text[i] == ",":
                    i += 1
                    continue
                if i < n and text[i] == "]":
                    i += 1
                    break
                raise json.JSONDecodeError("expected ',' or ']'", text, i)
        i = ws.match(text, i).end()
        if hint:
            if i < n and text[i] == "}":
                i = ws.match(text, i + 1).end()
            else:
                raise json.JSONDecodeError("expected '}' after the list", text, i)
        if i != n:
            raise json.JSONDecodeError("unexpected text after the list", text, i)
    except json.JSONDecodeError as exc:
        raise error_at(path, f"malformed JSON: {exc.msg}", line_at(starts, exc.pos)) from None
    except ValueError as exc:
        raise error_at(path, f"malformed JSON: {exc}", line_at(starts, i)) from None
    except RecursionError:
        raise error_at(
            path, "malformed JSON: nested too deeply for a table file", line_at(starts, i)
        ) from None
    columns: list[str] = []
    for obj, line in zip(items, lines, strict=True):
        if not isinstance(obj, dict):
            raise error_at(path, "each item must be an object of field names to values", line)
        for k, v in obj.items():
            if k not in columns:
                columns.append(k)
                if len(columns) > MAX_COLUMNS:
                    raise error_at(
                        path,
                        f"the objects name more than {MAX_COLUMNS} fields; the table format "
                        "has fewer",
                        line,
                        k,
                    )
            if isinstance(v, bool) or isinstance(v, list | dict):
                raise error_at(
                    path,
                    f"field {k!r} holds a {type(v).__name__}; expected text or a number",
                    line,
                    k,
                )
            if isinstance(v, str):
                no_surrogate(path, v, line, k)
            no_surrogate(path, k, line, k)
    cells = {c: [obj.get(c) for obj in items] for c in columns}
    return RawFrame(path, columns, cells, lines, hint)
