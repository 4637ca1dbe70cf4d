"""The pull-request gate: what a change to a table introduces, against a base revision.

``vpaudit gate TABLE --base REF`` audits the table as it is and as it was at REF (read from
git, never fetched), and classifies each finding of the current table:

* ``new`` -- its identity (check, substance, record ids; not its message) did not occur at
  REF, including findings on unchanged records caused by a changed partner or reference;
* ``existing`` -- it occurred at REF too;
* ``accepted`` -- a steward accepted it in the table's ``accepted.toml``;

and lists apart the findings of REF that the change cleared (``resolved``): what a change
that mends records did, for its reviewer to see.

Only substances whose rows changed are re-audited. Both sides are read as the audit reads
them and their rows compared by content (every field but where the row stands), never by
what a diff says: a row added, removed or changed in any field marks its substance, on
either side, whatever file, name, quoting or git setting it comes with; a row that only
moved marks nothing; a changed ``vpaudit.toml`` marks every substance. Findings of
unchanged substances are, by construction, existing ones.
"""

from __future__ import annotations

import datetime as dt
import re
import subprocess
import tempfile
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ._atomic import file_lock, write_atomic
from .auditing import AuditResult, GateInfo, audit_table, restrict
from .checks._registry import Severity
from .checks.finding import Finding
from .errors import TableError, TableErrors, VpauditError
from .policy import Policy, load_policy
from .readers.files import SUFFIXES
from .readers.table import PARTS, Table, load_table
from .runtime import in_thread

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

    @property
    def key(self) -> tuple:
        """The finding it is for: check and record ids (in any order), which are unique in a
        table that reads; the substance only for a finding on no record. An entry written by
        hand with its substance and a later ``vpaudit accept`` of the finding without it are
        for one finding.
        """
        records = tuple(sorted(self.records))
        return (self.check, records, None if records else self.substance)


def in_force(accepted: list[Acceptance]) -> list[int]:
    """The indices of the entries in force: of several entries for one finding, the last
    (a later ``vpaudit accept`` of the same finding renews or replaces the earlier ones,
    which stay in the file as its history).
    """
    last = {a.key: k for k, a in enumerate(accepted)}
    return sorted(last.values())


#: A gate's result: an :class:`AuditResult` with ``gate`` set (one result type for both).
GateResult = AuditResult


def _git(root: Path, *args: str) -> str:
    proc = subprocess.run(["git", "-C", str(root), *args], capture_output=True, text=True)
    if proc.returncode != 0:
        raise VpauditError(f"git {' '.join(args)} failed: {proc.stderr.strip()}")
    return proc.stdout


def _fetch_hint(root: Path, ref: str) -> str:
    """The command that fetches ``ref``: a remote-tracking name such as ``origin/main`` is
    fetched as branch ``main`` of remote ``origin``.
    """
    remotes = subprocess.run(
        ["git", "-C", str(root), "remote"], capture_output=True, text=True
    ).stdout.split()
    remote, _, branch = ref.partition("/")
    if branch and remote in remotes:
        return f"git fetch --depth=1 {remote} {branch}"
    return f"git fetch --depth=1 {remotes[0] if remotes else 'origin'} {ref}"


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
            f"shallow CI checkout fetch it first, e.g. '{_fetch_hint(root, ref)}'"
        )
    rel = table.relative_to(root)
    # -z: names exactly as stored (no quoting of non-ASCII or special characters)
    names = [
        n
        for n in _git(root, "ls-tree", "-r", "-z", "--name-only", ref, "--", str(rel)).split("\0")
        if n
    ]
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


def _row_keys(head, base) -> tuple[np.ndarray, np.ndarray]:
    """A 64-bit key of each row's content (every field but where the row stands), for the
    rows of ``head`` and of ``base``: equal rows get equal keys. A text column is factorized
    once over both sides and a number column read as its bits, so a key is made of integer
    codes, not of the cells' text; rows of two tables whose columns differ never match.
    """
    import pandas as pd

    cols = [c for c in head.columns if c not in ("file", "line")]
    n = len(head)
    key = np.zeros(n + len(base), dtype=np.uint64)
    if cols != [c for c in base.columns if c not in ("file", "line")]:
        key[n:] = 1  # another set of fields: no row of one side is a row of the other
        cols = []
    with np.errstate(over="ignore"):
        for c in cols:
            if head[c].dtype == np.float64 and base[c].dtype == np.float64:
                # a number's bits are its code (-0.0 as 0.0, every NaN as one)
                x = np.concatenate([head[c].to_numpy(), base[c].to_numpy()]) + 0.0
                code = np.where(np.isnan(x), np.nan, x).view(np.uint64)
            else:
                both = pd.concat([head[c], base[c]], ignore_index=True)
                code = (pd.factorize(both, use_na_sentinel=True)[0] + 2).astype(np.uint64)
            key = _mix(key * np.uint64(0x9E3779B97F4A7C15) + code)
    return key[:n], key[n:]


def _unchanged_in_place(head, base) -> np.ndarray | None:
    """Which rows are equal in every field (file and line aside) to the row at the same
    place on the other side, by the equality of :func:`_row_keys` (a number by value, -0.0
    as 0.0 and NaN as NaN; a text by value, missing as missing). None when the two sides
    differ in length, fields or the kind of a field: then every row is keyed.
    """
    import pandas as pd

    cols = [c for c in head.columns if c not in ("file", "line")]
    if len(head) != len(base) or cols != [c for c in base.columns if c not in ("file", "line")]:
        return None
    same = np.ones(len(head), dtype=bool)
    for c in cols:
        a, b = head[c], base[c]
        if a.dtype == np.float64 and b.dtype == np.float64:
            x, y = a.to_numpy(), b.to_numpy()
            same &= (x == y) | (np.isnan(x) & np.isnan(y))
        elif isinstance(a.dtype, pd.CategoricalDtype) and isinstance(b.dtype, pd.CategoricalDtype):
            # b's codes in a's categories; a category a lacks matches nothing (-2)
            at = a.cat.categories.get_indexer(b.cat.categories)
            remap = np.append(np.where(at >= 0, at, -2), -1)  # code -1 (missing) stays -1
            same &= a.cat.codes.to_numpy() == remap[b.cat.codes.to_numpy()]
        elif a.dtype == b.dtype and pd.api.types.is_string_dtype(a.dtype):
            eq = (a == b).to_numpy(dtype=bool, na_value=False)
            same &= eq | (a.isna().to_numpy() & b.isna().to_numpy())
        else:
            return None
    return same


def _mix(x: np.ndarray) -> np.ndarray:
    """The splitmix64 finalizer (Steele, Lea & Flood 2014): spreads every input bit over
    the 64 output bits, so keys of rows that differ in any code differ (collisions ~2^-64).
    """
    x = (x ^ (x >> np.uint64(30))) * np.uint64(0xBF58476D1CE4E5B9)
    x = (x ^ (x >> np.uint64(27))) * np.uint64(0x94D049BB133111EB)
    return x ^ (x >> np.uint64(31))


def _policy_text(table: Table | None) -> str | None:
    """The table's own policy file as text (None: it has none)."""
    path = table.policy_path if table is not None else None
    return path.read_text(encoding="utf-8") if path is not None and path.is_file() else None


def _changed_substances(head: Table, base: Table) -> set[str]:
    """Substances whose rows differ between the two tables, of any kind.

    Rows are compared by content, as the readers read them, never by what a diff's headers
    say: no file name, path quoting, git setting or moved line can hide a change. A row
    added, removed or changed in any field marks its substance (on either side); a row that
    only moved, within its file or to another one, marks nothing.
    """
    out: set[str] = set()
    for kind in PARTS:
        frames = [getattr(head, kind), getattr(base, kind)]
        if not len(frames[0]) and not len(frames[1]):
            continue
        if not len(frames[1]) or not len(frames[0]):  # every row added, or every row removed
            for frame in frames:
                if len(frame):
                    out.update(str(x) for x in frame["substance"].astype(object).to_numpy())
            continue
        # a change edits a few rows in place: rows equal at the same place on both sides
        # count once on each and cannot change the balance of any key, so only the others
        # are keyed
        same = _unchanged_in_place(*frames)
        if same is not None:
            if same.all():
                continue
            keep = np.flatnonzero(~same)
            frames = [frame.iloc[keep] for frame in frames]
        # each row's key includes its substance: a key whose count differs between the two
        # sides is a row added, removed or changed
        keys = np.concatenate(_row_keys(*frames))
        sign = np.repeat([1, -1], [len(frames[0]), len(frames[1])])
        _, where = np.unique(keys, return_inverse=True)
        net = np.bincount(where.ravel(), weights=sign)
        differ = np.flatnonzero(net[where.ravel()] != 0)
        n_head = len(frames[0])
        for k, frame in enumerate(frames):
            rows = differ[differ >= n_head] - n_head if k else differ[differ < n_head]
            if rows.size:
                names = frame["substance"].astype(object).to_numpy()[rows]
                out.update(str(x) for x in names)
    return out


def load_accepted(path: Path) -> list[Acceptance]:
    """Read ``accepted.toml``: a list of ``[[accepted]]`` entries with check, records,
    reason, by and an optional until (a TOML date) and substance.
    """
    if not path.is_file():
        return []
    return _parse_accepted(path.read_text(encoding="utf-8"), path)


def _parse_accepted(text: str, path: Path) -> list[Acceptance]:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise VpauditError(f"{path}: not valid TOML: {exc}") from None
    out = []
    entries = data.get("accepted", [])
    if not isinstance(entries, list):
        raise VpauditError(f"{path}: 'accepted' must be a list of [[accepted]] entries")
    for i, entry in enumerate(entries, start=1):
        if not isinstance(entry, dict):
            raise VpauditError(
                f"{path}: accepted entry {i} is {entry!r}, not an [[accepted]] table with "
                "check, records, reason and by"
            )
        missing = [k for k in ("check", "records", "reason", "by") if k not in entry]
        if missing:
            raise VpauditError(f"{path}: accepted entry {i} lacks {', '.join(missing)}")
        if not isinstance(entry["records"], list) or not all(
            isinstance(r, str) for r in entry["records"]
        ):
            raise VpauditError(f"{path}: accepted entry {i}: records must be a list of ids")
        until = entry.get("until")
        if until is not None and (not isinstance(until, dt.date) or isinstance(until, dt.datetime)):
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
    live = in_force(accepted)
    for row, f in enumerate(result.findings):
        for k in live:
            a = accepted[k]
            if a.matches(f) and (a.until is None or a.until >= today):
                result.findings.set(row, status="accepted")
                used.add(k)
                break
    extra = []
    for k in live:
        a = accepted[k]
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
        f.status = "new" if f.check == "acceptance-expired" else "existing"
    result.findings.extend(extra)


def _read_base(table: Path, base: str, into: Path) -> tuple[Table | None, str | None, str | None]:
    """The table as it was at git revision ``base``, copied into ``into`` and read: the
    table (None when it did not exist or could not be read), what made it unreadable (said
    at the base, not in the temporary copy), and its own policy file's text.
    """
    base_path = _table_at(table, base, into)
    try:
        base_table = load_table(base_path) if base_path.exists() else None
    except TableError as exc:  # say where at the base, not in a deleted temporary copy
        errors = exc.errors if isinstance(exc, TableErrors) else [exc]
        unreadable = str(errors[0]).replace(str(into) + "/", f"{base}:")
        if len(errors) > 1:
            unreadable += f" (and {len(errors) - 1} more problem(s))"
        return None, unreadable, None
    return base_table, None, _policy_text(base_table)


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
    with tempfile.TemporaryDirectory(prefix="vpaudit-gate-") as tmp:
        # the base is fetched from git and read on a thread while the work tree is read
        wait = in_thread(_read_base, table, base, Path(tmp), name="vpaudit-gate-base")
        try:
            head = load_table(table)
            pol: Policy = load_policy(head.policy_path, policy)
        except BaseException:
            try:  # the base's copy goes with the temporary directory: let it finish first
                wait()
            except BaseException:  # noqa: BLE001  (the work tree's error is the one said)
                pass
            raise
        base_table, unreadable, base_policy = wait()
    if base_table is None:  # the table did not exist (or could not be read) at the base
        changed = set(head.records["substance"].astype(str))
        for kind in ("references", "points"):
            changed |= set(getattr(head, kind)["substance"].astype(str))
    elif policy is None and _policy_text(head) != base_policy:
        # the thresholds themselves changed: every substance is affected
        changed = set(head.records["substance"].astype(str))
        changed |= set(base_table.records["substance"].astype(str))
    else:
        changed = _changed_substances(head, base_table)
    head_result = audit_table(restrict(head, changed), pol, table_path=str(table))
    head_keys = head_result.findings.keys()
    base_keys: set = set()
    resolved: list[Finding] = []
    if base_table is not None and changed:
        base_findings = audit_table(restrict(base_table, changed), pol).findings
        keys = base_findings.keys()
        base_keys = set(keys)
        now = set(head_keys)
        resolved = [f for f, key in zip(base_findings, keys, strict=True) if key not in now]
        resolved.sort(key=lambda f: (-f.severity.rank, f.substance, f.check))
    result = AuditResult(
        head_result.findings,
        head_result.summary,
        head_result.policy_description,
        str(table),
        head_result.checks_run,
        gate=GateInfo(base, len(changed), tuple(resolved)),
    )
    result.findings.status = ["existing" if key in base_keys else "new" for key in head_keys]
    if unreadable is not None:
        result.findings.append(
            Finding(
                "base-unreadable",
                Severity.note,
                "",
                (),
                f"the table could not be read at {base}, so every finding counts as new: "
                f"{unreadable}",
                {"base": base},
                None,
                None,
            )
        )
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
        **{s.value: result.findings.count(s) for s in Severity},
    }
    return result


def accept(
    table: str | Path, finding: str, reason: str, until: str | None = None, by: str | None = None
) -> tuple[Path, Acceptance | None]:
    """Append an acceptance to the table's ``accepted.toml`` (unrelated lines untouched).

    An entry for a finding already accepted there renews or replaces it: the last entry
    for a finding is the one in force (:func:`in_force`), and the earlier ones stay as its
    history.

    Parameters
    ----------
    finding : str
        ``CHECK:RECORD[,RECORD...]``, as the gate's text report prints it.

    Returns
    -------
    path : Path
        The ``accepted.toml`` written.
    replaced : Acceptance or None
        The entry that was in force for the finding before, if any.
    """
    import getpass

    if ":" not in finding:
        raise VpauditError(
            "name the finding as CHECK:RECORD[,RECORD], e.g. "
            "sources-disagree:kestrium-l1,kestrium-l2"
        )
    check, records = finding.split(":", 1)
    check = check.strip()
    ids = [r.strip() for r in records.split(",") if r.strip()]
    if not ids:
        raise VpauditError(f"{finding!r} names no record: write CHECK:RECORD[,RECORD]")
    from .checks._registry import get_check
    from .substance import check_records

    get_check(check)  # an unknown check is an error that lists the valid names
    check_records(load_table(table), ids)
    if until is not None:
        if not re.fullmatch(r"\d{4}-\d{2}-\d{2}", until):
            raise VpauditError(f"--until {until!r} is not a date written like 2027-06-30")
        try:
            day = dt.date.fromisoformat(until)
        except ValueError:
            raise VpauditError(f"--until {until!r} is not a date of the calendar") from None
        if day < dt.date.today():
            raise VpauditError(
                f"--until {until} is in the past: the acceptance would expire at once"
            )
    who = by or _git_user() or getpass.getuser()
    root = Path(table) if Path(table).is_dir() else Path(table).parent
    path = root / ACCEPTED_FILE
    entry = [
        "",
        "[[accepted]]",
        f"check = {_toml_string(check, 'the check')}",
        f"records = [{', '.join(_toml_string(i, 'a record id') for i in ids)}]",
        f"reason = {_toml_string(reason, '--reason')}",
        f"by = {_toml_string(who, '--by')}",
        f"accepted_on = {dt.date.today().isoformat()}",
    ]
    if until:
        entry.append(f"until = {until}")
    with file_lock(root, what=f"the table {root}"):
        text = (
            path.read_text(encoding="utf-8")
            if path.exists()
            else (
                "# Findings accepted by the table's stewards (vpaudit accept writes this file).\n"
            )
        )
        new = text.rstrip("\n") + "\n" + "\n".join(entry) + "\n"
        after = _parse_accepted(new, path)  # the file must stay valid: checked before writing
        write_atomic(path, new)
    key = after[-1].key
    replaced = next((a for a in reversed(after[:-1]) if a.key == key), None)
    return path, replaced


def _toml_string(text: str, what: str) -> str:
    """``text`` as a TOML basic string; refuses what no UTF-8 file can hold."""
    bad = next((ch for ch in text if 0xD800 <= ord(ch) <= 0xDFFF), None)
    if bad is not None:
        raise VpauditError(
            f"{what} holds an unpaired surrogate (U+{ord(bad):04X}), which no text file can "
            "hold: type the character itself, or leave it out"
        )
    out = []
    for ch in text:
        if ch in ('"', "\\"):
            out.append("\\" + ch)
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def _git_user() -> str | None:
    proc = subprocess.run(["git", "config", "user.name"], capture_output=True, text=True)
    return proc.stdout.strip() or None
