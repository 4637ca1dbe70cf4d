"""What the human-readable reports share about suggestions: when two findings carry one fix."""

from __future__ import annotations

import shlex


def fix_key(suggestion: dict) -> tuple:
    """The identity of a suggested fix (its record, kind and corrected fields): findings
    that carry the same key carry one fix, explained once and then named "the same fix".
    """
    return (
        suggestion.get("record"),
        suggestion.get("kind"),
        repr(suggestion.get("corrected")),
    )


class Explained:
    """The fixes a report has explained so far: each fix is explained at the first finding
    that carries it and named :func:`same_fix` at the others (one per report section).
    """

    def __init__(self) -> None:
        self._keys: set[tuple] = set()

    def first(self, suggestion: dict) -> bool:
        """Whether ``suggestion`` is met for the first time (and note that it has been)."""
        key = fix_key(suggestion)
        if key in self._keys:
            return False
        self._keys.add(key)
        return True


def same_fix(suggestion: dict) -> str:
    """How a report names a fix it explained above."""
    return f"the same fix ({suggestion.get('kind')}, above)"


def apply_command(table_path: str | None, spec: str) -> str:
    """The command that applies the fix of finding ``spec`` in the table at ``table_path``
    (``TABLE`` when unknown), quoted for a POSIX shell where a path or an id needs it. A fix
    is written to the table's files, never to a store: for a table audited from its store,
    the command names the files as TABLE and says how to rebuild the store from them.
    """
    from ..api import is_store

    if table_path is not None and is_store(table_path):
        store = shlex.quote(str(table_path))
        return (
            f"vpaudit apply TABLE {shlex.quote(spec)} (TABLE: the table the store {store} was "
            f"imported from), then vpaudit import TABLE --db {store}"
        )
    return f"vpaudit apply {shlex.quote(str(table_path or 'TABLE'))} {shlex.quote(spec)}"
