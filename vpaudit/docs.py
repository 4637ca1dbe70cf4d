"""Documentation generated from the check registry (``vpaudit checks``, docs/checks.md)."""

from __future__ import annotations

import functools
import json
import textwrap

from . import checks as _checks  # noqa: F401  (registers every check)
from .checks._registry import ordered
from .policy import PRESETS

__all__ = ["checks_text", "checks_json", "checks_markdown"]


def _preset_values(name: str, key: str) -> dict[str, float]:
    out = {}
    for preset, table in PRESETS.items():
        if key in table.get(name, {}):
            out[preset] = table[name][key]
    return out


def checks_json() -> str:
    """The registry as JSON: name, severity (and the tiers some findings take instead),
    scope, summary, basis, thresholds.
    """
    data = []
    for spec in ordered():
        data.append(
            {
                "name": spec.name,
                "severity": spec.severity.value,
                "escalates_to": spec.escalates_to.value if spec.escalates_to else None,
                "tiers": {name: sev.value for name, sev in spec.tiers.items()},
                "scope": spec.scope.value,
                "summary": spec.summary,
                "basis": spec.basis,
                "rationale": spec.doc,
                "thresholds": [
                    {
                        "name": t.name,
                        "default": t.default,
                        "unit": t.unit,
                        "description": t.description,
                        "presets": _preset_values(spec.name, t.name),
                    }
                    for t in spec.thresholds.values()
                ],
            }
        )
    return json.dumps(data, indent=2) + "\n"


def checks_text(width: int = 100) -> str:
    """The registry for a terminal."""
    lines = []
    for spec in ordered():
        sev = spec.severity.value + "".join(
            f", {tier.value} if {name}" for name, tier in spec.tiers.items()
        )
        lines.append(f"{spec.name}  [{sev}, per {spec.scope.value}]")
        # check names and hyphenated words stay whole at a line's end
        wrap = functools.partial(textwrap.wrap, width=width, break_on_hyphens=False)
        lines += wrap(spec.summary, initial_indent="    ", subsequent_indent="    ")
        lines += wrap(f"basis: {spec.basis}", initial_indent="    ", subsequent_indent="      ")
        for t in spec.thresholds.values():
            extra = "".join(f", {p}: {v:g}" for p, v in _preset_values(spec.name, t.name).items())
            unit = "" if t.unit == "-" else f" {t.unit}"
            lines += wrap(
                f"{t.name} = {t.default:g}{unit}: {t.description}"
                f"{' (' + extra[2:] + ')' if extra else ''}",
                initial_indent="    - ",
                subsequent_indent="      ",
            )
        lines.append("")
    lines.append(
        "Set thresholds and severities in the table's vpaudit.toml under "
        "[checks.<name>]; 'vpaudit checks --format markdown' gives the full rationale."
    )
    return "\n".join(lines) + "\n"


def checks_markdown() -> str:
    """The registry as the Markdown page ``docs/checks.md``."""
    out = [
        "# Checks",
        "",
        "Generated from the check registry by `vpaudit checks --format markdown`; a test "
        "keeps this page in sync. Default thresholds are those of the `evaluated` preset; "
        "the `compilation` preset's values are given where they differ.",
        "",
    ]
    for spec in ordered():
        out += [
            f"## `{spec.name}`",
            "",
            f"*Severity* `{spec.severity.value}`"
            + "".join(f"; `{tier.value}` if {name}" for name, tier in spec.tiers.items())
            + f", *per* {spec.scope.value}. {spec.summary}",
            "",
            f"*Basis:* {spec.basis}",
            "",
            spec.doc,
            "",
        ]
        if spec.thresholds:
            out += ["| threshold | default | unit | meaning | presets |", "|---|---|---|---|---|"]
            for t in spec.thresholds.values():
                pv = ", ".join(f"{p}: {v:g}" for p, v in _preset_values(spec.name, t.name).items())
                cells = [f"`{t.name}`", f"{t.default:g}", t.unit, t.description, pv]
                out.append("| " + " | ".join(c.replace("|", "\\|") for c in cells) + " |")
            out.append("")
    return "\n".join(out)
