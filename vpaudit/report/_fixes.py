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


def every_finding_command(result) -> str:
    """The command whose CSV report lists every finding of ``result`` (an audit's or a
    gate's), for an output that lists only some: paths quoted for a POSIX shell.
    """
    path = shlex.quote(str(result.table_path or "TABLE"))
    if result.gated:
        return f"vpaudit gate {path} --base {shlex.quote(result.gate.base)} --format csv"
    return f"vpaudit audit {path} --format csv"


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


#: At most this many readings are named in a report's sentence (the JSON lists them all).
MOST_NAMED = 8


def undecided_by_record(summary: dict) -> dict[tuple[str, str], dict]:
    """The audit's undecided diagnoses (``summary["undecided"]``) by (substance, record)."""
    return {(u["substance"], u["record"]): u for u in summary.get("undecided", ())}


class Undecided:
    """Where a report says that several readings clear a substance's errors: once per
    substance, at its first error or warning on the record those readings correct that
    carries no suggestion.
    """

    def __init__(self, summary: dict) -> None:
        self._open = undecided_by_record(summary)
        self._substances = {substance for substance, _ in self._open}
        self._said: set[str] = set()

    def pending(self, substance: str) -> bool:
        """Whether ``substance`` has readings not yet shown (cheap: no finding needed)."""
        return substance in self._substances and substance not in self._said

    def entry(self, finding) -> dict | None:
        """The undecided diagnosis (an entry of ``summary["undecided"]``) to show with
        ``finding``, or None; each is shown once.
        """
        if finding.suggestion or finding.severity.rank < 1 or finding.substance in self._said:
            return None
        for rid in finding.records:
            entry = self._open.get((finding.substance, rid))
            if entry is not None:
                self._said.add(finding.substance)
                return entry
        return None

    def sentence(self, finding) -> str | None:
        """The sentence to show under ``finding``, or None."""
        entry = self.entry(finding)
        return None if entry is None else undecided_sentence(entry)


def _value(v) -> str:
    return format(v, ".6g") if isinstance(v, float) else str(v)


def _either(values: list[str]) -> str:
    return values[0] if len(values) == 1 else f"{', '.join(values[:-1])} or {values[-1]}"


#: The slips that change a coefficient's value, in the words a reading adds to its new
#: value (a changed unit or log base names itself: ``pressure_unit -> kPa``).
_VALUE_SLIPS = {
    "sign": "its sign changed",
    "decimal-shift": "its decimal point moved",
    "digit-transposition": "two of its digits transposed",
    "coefficient-swap": "two columns swapped",
    "phase-swap": "the phase labels swapped",
}


def _why(kind: str) -> str:
    words = _VALUE_SLIPS.get(kind)
    return f" ({words})" if words else ""


def readings(fixes: list[dict]) -> list[str]:
    """The readings in words: those that change one field of the record alike are named
    together (``pressure_unit -> kPa, mbar or psi``), the others each with their changes;
    a changed coefficient says how (``C -> -62.11 (two of its digits transposed)``).
    """
    together: dict[tuple[str, str], list[str]] = {}
    out: list[object] = []
    for fix in fixes:
        changed = fix["corrected"]
        if len(changed) == 1 and "also" not in fix:
            ((field, value),) = changed.items()
            if (fix["kind"], field) not in together:
                together[(fix["kind"], field)] = []
                out.append((fix["kind"], field))
            together[(fix["kind"], field)].append(_value(value))
            continue
        parts = [f"{k} -> {_value(v)}" for k, v in changed.items()]
        parts += [
            f"{also['record']} {k} -> {_value(v)}"
            for also in fix.get("also", ())
            for k, v in also["corrected"].items()
        ]
        out.append(", ".join(parts) + _why(fix["kind"]))
    return [
        f"{item[1]} -> {_either(together[item])}{_why(item[0])}"
        if isinstance(item, tuple)
        else str(item)
        for item in out
    ]


def undecided_sentence(entry: dict) -> str:
    """Why no fix is suggested although slips explain the errors, and what could decide."""
    fixes = entry["fixes"]
    named = readings(fixes[:MOST_NAMED])
    more = f" (and {len(fixes) - MOST_NAMED} more)" if len(fixes) > MOST_NAMED else ""
    records = list(dict.fromkeys(fix["record"] for fix in fixes))  # entry["record"] first
    text = (
        f"No fix is suggested: {len(fixes)} readings of {', '.join(records)} each clear every "
        f"error of {entry['substance']}, and nothing in the table tells them apart: "
        f"{'; '.join(named)}{more}."
    )
    lacking = entry.get("lacking") or []
    if lacking:
        text += (
            f" The table has no {_either(lacking)} for {entry['substance']}; any of them may "
            "tell the readings apart."
        )
    else:
        text += " They differ by less than the evidence here resolves."
    return text + " Check the source before changing the record."
