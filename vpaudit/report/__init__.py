"""Reporters: each module exposes ``render(result) -> str``; :data:`RENDERERS` maps the
``--format`` choices to them. :func:`pieces` gives the same text in pieces, for writing
large reports a piece at a time (the formats whose module has ``chunks``).
"""

from collections.abc import Iterator

from . import csv as _csv
from . import json as _json
from . import markdown as _markdown
from . import sarif as _sarif
from . import text as _text

RENDERERS = {
    "text": _text.render,
    "json": _json.render,
    "markdown": _markdown.render,
    "csv": _csv.render,
    "sarif": _sarif.render,
}

_CHUNKED = {"json": _json.chunks, "csv": _csv.chunks}


def pieces(fmt: str, result) -> Iterator[str]:
    """The report of ``result`` in format ``fmt``, in pieces that join to
    ``RENDERERS[fmt](result)``.
    """
    if fmt in _CHUNKED:
        return _CHUNKED[fmt](result)
    return iter([RENDERERS[fmt](result)])


__all__ = ["RENDERERS", "pieces"]
