"""Reporters: each module exposes ``render(result) -> str``; :data:`RENDERERS` maps the
``--format`` choices to them.
"""

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

__all__ = ["RENDERERS"]
