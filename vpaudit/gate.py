"""The pull-request gate: what a change to a table introduces, against a base revision.

``vpaudit gate TABLE --base REF`` audits the table as it is and as it was at REF (read from
git, never fetched), and classifies each finding of the current table:

* ``new`` -- its identity (check, substance, record ids; not its message) did not occur at
  REF, including findings on unchanged records caused by a changed partner or reference;
* ``existing`` -- it occurred at REF too;
* ``accepted`` -- a steward accepted it in the table's ``accepted.toml``.

Only substances whose rows changed are re-audited: ``git diff -U0 REF`` gives the changed
lines, which map to rows and so to substances, on both sides (a changed header or comment,
a new, deleted or untracked file, or a changed ``vpaudit.toml`` marks everything it can
affect). Findings of unchanged substances are, by construction, existing ones.
"""

from __future__ import annotations

import datetime as dt
import re
import subprocess
import tempfile
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ._columns import codes
from .auditing import AuditResult, audit_table, restrict
from .checks._registry import Severity
from .checks.finding import Finding
from .errors import VpauditError
from .policy import Policy, load_policy
from .readers.files import SUFFIXES
from .readers.table import KINDS, Table, load_table

__all__ = ["GateResult", "gate", "load_accepted", "accept", "ACCEPTED_FILE"]

#: The baseline file of accepted findings, at the root of a table directory.
ACCEPTED_FILE = "accepted.toml"


@dataclass(frozen=True)
class Acceptance:
    """One accepted finding."""

    check: str
    records: tuple[str, ...]
    reason: str
    by: str
    until: dt.date | None = None
    substance: str | None = None

    def matches(self, f: Finding) -> bool:
        """Whether this acceptance is for finding ``f`` (check and record ids)."""
        return (
            f.check == self.check
            and tuple(sorted(f.records)) == tuple(sorted(self.records))
            and (self.substance is None or self.substance == f.substance)
        )


@dataclass
class GateResult(AuditResult):
    """An audit result whose findings carry a status: new, existing or accepted."""

    status: dict[int, str] = field(default_factory=dict)
    base: str = ""
    affected: int = 0

    def status_of(self, f: Finding) -> str:
        """new, existing or accepted."""
        return self.status.get(id(f), "new")

    def fails(self, fail_on: str) -> bool:
        """Whether a *new* finding is at or above ``fail_on``."""
        if fail_on == "never":
            return False
        level = Severity(fail_on).rank
        return any(self.status_of(f) == "new" and f.severity.rank >= level for f in self.findings)

    def finding_dict(self, f: Finding) -> dict:
        """The audit's JSON form of a finding, with its ``status``."""
        d = f.to_dict()
        d["status"] = self.status_of(f)
        return d

    def summary_dict(self) -> dict:
        """The audit's summary, with the count of new findings, the base and the number
        of substances re-audited.
        """
        return {
            **self.summary,
            "new": sum(self.status_of(f) == "new" for f in self.findings),
            "base": self.base,
            "substances_reaudited": self.affected,
        }


def _git(root: Path, *args: str) -> str:
    proc = subprocess.run(["git", "-C", str(root), *args], capture_output=True, text=True)
    if proc.returncode != 0:
        raise VpauditError(f"git {' '.join(args)} failed: {proc.stderr.strip()}")
    return proc.stdout


def _table_at(table: Path, ref: str, into: Path) -> Path:
    """Write the table's files as they were at ``ref`` into ``into``; returns the copy."""
    table = table.resolve()
    where = table if table.is_dir() else table.parent
    try:
        root = Path(_git(where, "rev-parse", "--show-toplevel").strip())
    except VpauditError:
        raise VpauditError(
            f"{table} is not inside a git repository: the gate compares against a git revision"
        ) from None
    check = subprocess.run(
        ["git", "-C", str(root), "rev-parse", "--verify", "--quiet", f"{ref}^{{commit}}"],
        capture_output=True,
        text=True,
    )
    if check.returncode != 0:
        raise VpauditError(
            f"the base revision {ref!r} is not in this clone. vpaudit fetches nothing; in a "
            f"shallow CI checkout fetch it first, e.g. 'git fetch --depth=1 origin {ref}'"
        )
    rel = table.relative_to(root)
    names = _git(root, "ls-tree", "-r", "--name-only", ref, "--", str(rel)).splitlines()
    copy = into / rel
    for name in names:
        path = Path(name)
        if path.suffix.lower() not in SUFFIXES and path.name not in ("vpaudit.toml", ACCEPTED_FILE):
            continue
        blob = subprocess.run(
            ["git", "-C", str(root), "show", f"{ref}:{name}"], capture_output=True, check=True
        ).stdout
        target = into / path
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_bytes(blob)
    return copy


_HUNK = re.compile(r"^@@ -(\d+)(?:,(\d+))? \+(\d+)(?:,(\d+))? @@")


def _diff_lines(root: Path, ref: str, rel: Path) -> tuple[dict, dict, set]:
    """Changed lines per file between ``ref`` and the work tree (``git diff -U0``).

    Returns (base_lines, head_lines, whole): line numbers per repository-relative file on
    each side, and the files that changed as a whole (new, deleted, untracked).
    """
    text = _git(
        root, "diff", "-U0", "--no-color", "--no-renames", "--no-ext-diff", ref, "--", str(rel)
    )
    base: dict[str, set[int]] = {}
    head: dict[str, set[int]] = {}
    whole: set[str] = set()
    old = new = None
    for line in text.splitlines():
        if line.startswith("--- "):
            old = None if line[4:] == "/dev/null" else line[6:]
        elif line.startswith("+++ "):
            new = None if line[4:] == "/dev/null" else line[6:]
            if old is None or new is None:
                whole.add(old or new)
        elif line.startswith("@@") and old and new:
            m = _HUNK.match(line)
            a, b = int(m[1]), int(m[2] if m[2] is not None else 1)
            c, d = int(m[3]), int(m[4] if m[4] is not None else 1)
            # a pure insertion (b = 0) or deletion (d = 0) touches no line on that side
            base.setdefault(old, set()).update(range(a, a + b))
            head.setdefault(new, set()).update(range(c, c + d))
    untracked = _git(root, "ls-files", "--others", "--exclude-standard", "--", str(rel))
    whole.update(untracked.splitlines())
    return base, head, whole


def _touched(table: Table, to_key, lines: dict, whole: set) -> set[str]:
    """Substances of the rows standing at the changed lines; a change outside any row (a
    header, a comment) or a whole-file change marks every substance of that file.

    ``to_key`` maps a frame's file name to its repository-relative path (None: not in it).
    """
    out: set[str] = set()
    for kind in KINDS:
        frame = getattr(table, kind)
        if not len(frame):
            continue
        file_code, file_names = codes(frame["file"])
        line_all = frame["line"].to_numpy()

        def substances(rows: np.ndarray, frame=frame) -> list[str]:
            # as text only for the rows asked for (all of a file only when it all changed)
            return frame["substance"].iloc[rows].astype(str).tolist()

        for k, name in enumerate(file_names):
            key = to_key(str(name))
            rows = np.flatnonzero(file_code == k)
            if key is None or key in whole:
                out.update(substances(rows))
                continue
            changed = lines.get(key)
            if not changed:
                continue
            order = np.argsort(line_all[rows])
            starts, rows = line_all[rows][order], rows[order]
            at = np.searchsorted(starts, np.fromiter(changed, dtype=np.int64), side="right") - 1
            if (at < 0).any():
                out.update(substances(rows))  # a header or comment line changed
            out.update(substances(rows[at[at >= 0]]))
    return out


def _relative(path: str, start: Path) -> str | None:
    try:
        return Path(path).resolve().relative_to(start.resolve()).as_posix()
    except ValueError:
        return None


def load_accepted(path: Path) -> list[Acceptance]:
    """Read ``accepted.toml``: a list of ``[[accepted]]`` entries with check, records,
    reason, by and an optional until (a TOML date) and substance.
    """
    if not path.is_file():
        return []
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except tomllib.TOMLDecodeError as exc:
        raise VpauditError(f"{path}: not valid TOML: {exc}") from None
    out = []
    for i, entry in enumerate(data.get("accepted", []), start=1):
        missing = [k for k in ("check", "records", "reason", "by") if k not in entry]
        if missing:
            raise VpauditError(f"{path}: accepted entry {i} lacks {', '.join(missing)}")
        until = entry.get("until")
        if until is not None and not isinstance(until, dt.date):
            raise VpauditError(f"{path}: accepted entry {i}: until must be a date (2027-06-30)")
        out.append(
            Acceptance(
                str(entry["check"]),
                tuple(map(str, entry["records"])),
                str(entry["reason"]),
                str(entry["by"]),
                until,
                entry.get("substance"),
            )
        )
    return out


def _apply_acceptances(
    result: GateResult, accepted: list[Acceptance], path: Path, today: dt.date
) -> None:
    used = set()
    for f in result.findings:
        for k, a in enumerate(accepted):
            if a.matches(f) and (a.until is None or a.until >= today):
                result.status[id(f)] = "accepted"
                used.add(k)
                break
    extra = []
    for k, a in enumerate(accepted):
        if a.until is not None and a.until < today:
            extra.append(
                Finding(
                    "acceptance-expired",
                    Severity.warning,
                    a.substance or "",
                    a.records,
                    f"the acceptance of {a.check} on "
                    f"{', '.join(a.records)} expired on {a.until} ({a.reason}; "
                    f"accepted by {a.by}): review it again.",
                    {"check": a.check, "until": str(a.until)},
                    None,
                    str(path),
                )
            )
        elif k not in used:
            extra.append(
                Finding(
                    "acceptance-unused",
                    Severity.note,
                    a.substance or "",
                    a.records,
                    f"the accepted finding {a.check} on "
                    f"{', '.join(a.records)} no longer occurs: remove the entry "
                    f"from {path.name}.",
                    {"check": a.check},
                    None,
                    str(path),
                )
            )
    for f in extra:
        result.findings.append(f)
        result.status[id(f)] = "new" if f.check == "acceptance-expired" else "existing"


def gate(
    table: str | Path, base: str, policy: str | None = None, today: dt.date | None = None
) -> GateResult:
    """Audit ``table`` against its state at git revision ``base``.

    Parameters
    ----------
    table : path
        A table directory (or file) inside a git work tree.
    base : str
        The base revision (branch, tag or commit) to compare with.
    policy : str, optional
        A preset or policy file, as for the audit.
    today : date, optional
        The date acceptances expire against (today by default).
    """
    table = Path(table)
    head = load_table(table)
    pol: Policy = load_policy(head.policy_path, policy)
    with tempfile.TemporaryDirectory(prefix="vpaudit-gate-") as tmp:
        base_path = _table_at(table, base, Path(tmp))
        base_table = load_table(base_path) if base_path.exists() else None
    root = Path(
        _git(
            table.resolve() if table.is_dir() else table.resolve().parent,
            "rev-parse",
            "--show-toplevel",
        ).strip()
    )
    rel = table.resolve().relative_to(root)
    base_lines, head_lines, whole = _diff_lines(root, base, rel)
    policy_files = {(rel / "vpaudit.toml").as_posix()}
    if policy is None and (policy_files & (set(base_lines) | set(head_lines) | whole)):
        # the thresholds themselves changed: every substance is affected
        changed = set(head.records["substance"].astype(str))
        if base_table is not None:
            changed |= set(base_table.records["substance"].astype(str))
    else:
        changed = _touched(head, lambda n: _relative(n, root), head_lines, whole)
        if base_table is not None:
            changed |= _touched(
                base_table,
                lambda n: (rel / r).as_posix() if (r := _relative(n, base_path)) else None,
                base_lines,
                whole,
            )
    head_result = audit_table(restrict(head, changed), pol, table_path=str(table))
    base_keys = set()
    if base_table is not None and changed:
        base_keys = {f.key for f in audit_table(restrict(base_table, changed), pol).findings}
    result = GateResult(
        head_result.findings,
        head_result.summary,
        head_result.policy_description,
        str(table),
        head_result.checks_run,
        base=base,
        affected=len(changed),
    )
    for f in result.findings:
        result.status[id(f)] = "existing" if f.key in base_keys else "new"
    root = table if table.is_dir() else table.parent
    _apply_acceptances(
        result, load_accepted(root / ACCEPTED_FILE), root / ACCEPTED_FILE, today or dt.date.today()
    )
    order = {"new": 0, "accepted": 2, "existing": 1}
    result.findings.sort(
        key=lambda f: (order[result.status_of(f)], -f.severity.rank, f.substance, f.check)
    )
    result.summary = {
        **result.summary,
        **{s.value: sum(f.severity is s for f in result.findings) for s in Severity},
    }
    return result


def accept(
    table: str | Path, finding: str, reason: str, until: str | None = None, by: str | None = None
) -> Path:
    """Append an acceptance to the table's ``accepted.toml`` (unrelated lines untouched).

    Parameters
    ----------
    finding : str
        ``CHECK:RECORD[,RECORD...]``, as the gate's text report prints it.
    """
    import getpass
    import json

    if ":" not in finding:
        raise VpauditError(
            "name the finding as CHECK:RECORD[,RECORD], e.g. "
            "sources-disagree:kestrium-l1,kestrium-l2"
        )
    check, records = finding.split(":", 1)
    ids = [r.strip() for r in records.split(",") if r.strip()]
    if until:
        try:
            dt.date.fromisoformat(until)
        except ValueError:
            raise VpauditError(f"--until {until!r} is not a date like 2027-06-30") from None
    who = by or _git_user() or getpass.getuser()
    root = Path(table) if Path(table).is_dir() else Path(table).parent
    path = root / ACCEPTED_FILE
    entry = [
        "",
        "[[accepted]]",
        f"check = {json.dumps(check)}",
        f"records = {json.dumps(ids)}",
        f"reason = {json.dumps(reason)}",
        f"by = {json.dumps(who)}",
        f"accepted_on = {dt.date.today().isoformat()}",
    ]
    if until:
        entry.append(f"until = {until}")
    text = (
        path.read_text(encoding="utf-8")
        if path.exists()
        else ("# Findings accepted by the table's stewards (vpaudit accept writes this file).\n")
    )
    path.write_text(text.rstrip("\n") + "\n" + "\n".join(entry) + "\n", encoding="utf-8")
    load_accepted(path)  # the file must stay valid
    return path


def _git_user() -> str | None:
    proc = subprocess.run(["git", "config", "user.name"], capture_output=True, text=True)
    return proc.stdout.strip() or None
