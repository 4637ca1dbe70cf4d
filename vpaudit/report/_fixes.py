"""What the human-readable reports share about suggestions: when two findings carry one fix."""

from __future__ import annotations


def fix_key(suggestion: dict) -> tuple:
    """The identity of a suggested fix (its record, kind and corrected fields): findings
    that carry the same key carry one fix, explained once and then named "the same fix".
    """
    return (
        suggestion.get("record"),
        suggestion.get("kind"),
        repr(suggestion.get("corrected")),
    )


def same_fix(suggestion: dict) -> str:
    """How a report names a fix it explained above."""
    return f"the same fix ({suggestion.get('kind')}, above)"
