"""Text from a table, made safe to print: every control character shown, never obeyed.

A substance name, source or note comes from whoever wrote the table. Printed as it is, a CR
or a line separator starts a new line in a pull-request comment (a fake heading, an open
``<!--`` that hides the rest), an escape sequence recolours or clears a terminal, and a
bidirectional override reorders what a reviewer reads. Every human-readable output passes
its table text through :func:`visible`; JSON, SARIF and CSV escape or quote by their own
rules and keep the exact text.
"""

from __future__ import annotations

import re

__all__ = ["markdown_text", "visible"]

# C0 and C1 controls, DEL, line and paragraph separators, bidirectional controls
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029\u200e\u200f\u202a-\u202e\u2066-\u2069]")
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}


def _show(ch: str) -> str:
    return _NAMED.get(ch) or (f"\\x{ord(ch):02x}" if ord(ch) < 0x100 else f"\\u{ord(ch):04x}")


def visible(text: object, keep: str = "") -> str:
    r"""``text`` with each control character written as an escape (``\r``, ``\x1b``,
    ``\u2028``), except those in ``keep`` (e.g. ``"\n"`` for output of several lines).
    """
    s = "" if text is None else str(text)
    return _CONTROL.sub(lambda m: m[0] if m[0] in keep else _show(m[0]), s)


# Markdown and HTML syntax a table's text must not bring into a comment
_MARKDOWN = re.compile(r"([\\`*_{}\[\]()<>#+!|~&])")


def markdown_text(text: object) -> str:
    """``text`` for one Markdown line or table cell: control characters shown, Markdown and
    HTML syntax escaped with a backslash, and ``@`` kept from mentioning anyone.
    """
    return _MARKDOWN.sub(r"\\\1", visible(text)).replace("@", "@\u2060")
