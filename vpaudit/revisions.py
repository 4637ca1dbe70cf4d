"""Revisions: a record is never overwritten without its history.

Applying a correction edits the record where it stands in its table file and appends one
entry to the table's revision log, ``history/revisions.jsonl`` in the table directory (or
``<file>.history.jsonl`` beside a single table file). Each entry says who, when, why, which
finding it answers, which cells changed from what to what, and keeps the record's whole line
as it was and as it became, so every earlier revision can be shown again
(:func:`history`).

File edits keep the file's format, order and every unrelated byte: in a CSV file only the
changed cells of the record's own line are rewritten (the other cells keep their exact
text and quoting, the line keeps its ending); in YAML and JSON files only the value of each
changed key inside the record's mapping. Parquet files are binary and are not edited.
"""

from __future__ import annotations

import csv
import datetime as _dt
import getpass
import json
import re
import uuid
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ._atomic import append_line, file_lock, write_atomic
from .errors import Location, TableError, VpauditError
from .readers.lines import split_lines
from .writers import csv_cell

if TYPE_CHECKING:
    from .checks.finding import Finding

__all__ = [
    "Applied",
    "RevisionError",
    "apply_correction",
    "apply_finding",
    "apply_suggestion",
    "find_finding",
    "history",
    "history_path",
    "parse_finding",
]


class RevisionError(VpauditError):
    """A correction that cannot be written as asked (the message says why)."""

    kind = "cannot revise the record"


def history_path(table: str | Path) -> Path:
    """Where the revision log of ``table`` (a directory or a single file) lives."""
    p = Path(table)
    return (
        p / "history" / "revisions.jsonl" if p.is_dir() else p.with_name(p.name + ".history.jsonl")
    )


def _root(table: str | Path) -> Path:
    """The folder that holds the table (itself, for a directory): what writers lock."""
    p = Path(table)
    return p if p.is_dir() else p.parent


def _who(by: str | None) -> str:
    if by:
        return by
    try:
        from .gate import _git_user

        user = _git_user()
    except Exception:  # pragma: no cover - git missing
        user = None
    return user or getpass.getuser()


# --- CSV: cells as raw spans of one physical line ------------------------------------------


def _csv_spans(line: str, delimiter: str) -> list[tuple[int, int]]:
    """(start, end) of each cell's raw text in one CSV line (quotes included)."""
    spans = []
    i, n = 0, len(line.rstrip("\r\n"))
    while True:
        start = i
        if i < n and line[i] == '"':
            i += 1
            while i < n:
                if line[i] == '"':
                    if i + 1 < n and line[i + 1] == '"':
                        i += 2
                        continue
                    i += 1
                    break
                i += 1
        while i < n and line[i] != delimiter:
            i += 1
        spans.append((start, i))
        if i >= n:
            return spans
        i += 1


def _edit_csv(lines: list[str], index: int, record_id: str, changes: dict[str, str], path):
    """The record's block (its first line and any lines a quoted cell carries it over) with
    the changed cells rewritten, the cells it had, and the index after the block.
    """
    header_at = next(
        k for k, ln in enumerate(lines) if ln.strip() and not ln.lstrip().startswith("#")
    )
    head = lines[header_at].rstrip("\r\n")
    delimiter = "," if "," in head else (";" if ";" in head else "\t")
    columns = next(csv.reader([head], delimiter=delimiter))
    reader = csv.reader(iter(lines[index:]), delimiter=delimiter)
    try:
        cells = next(reader)
    except (csv.Error, StopIteration):
        cells = []
    end = index + reader.line_num
    block = "".join(lines[index:end])
    if "id" not in columns or len(cells) != len(columns) or cells[columns.index("id")] != record_id:
        raise RevisionError(
            f"{path}:{index + 1}: expected record {record_id!r} on this line; the file changed "
            "since it was read -- run the audit again"
        )
    missing = [f for f in changes if f not in columns]
    if missing:
        raise RevisionError(
            f"{path}: the file has no column {', '.join(map(repr, missing))}; add the column "
            "(an empty cell in every row) and apply again, so that the edit touches one line"
        )
    spans = _csv_spans(block, delimiter)
    new = block
    for field in sorted(changes, key=lambda f: -spans[columns.index(f)][0]):  # right to left
        a, b = spans[columns.index(field)]
        new = new[:a] + csv_cell(changes[field], delimiter) + new[b:]
    return new, {f: cells[columns.index(f)] for f in changes}, end


# --- YAML and JSON: the value of one key inside the record's mapping -------------------------


def _edit_mapping(lines, index, record_id, changes, path, json_style: bool):
    # the mapping runs from its first line to the next record's first line (or the end)
    end = len(lines)
    opener = re.compile(r"^\s*-\s" if not json_style else r"^\s*\{")
    for k in range(index + 1, len(lines)):
        if opener.match(lines[k]):
            end = k
            break
    block = "".join(lines[index:end])
    before: dict[str, str] = {}
    for field, text in changes.items():
        if json_style:
            key = re.escape(field)
            pat = re.compile(r'("' + key + r'"\s*:\s*)("(?:[^"\\]|\\.)*"|[^,\s}\]]+)')
        else:
            pat = re.compile(
                r"((?:^|[\s{,-])"
                + re.escape(field)
                + r"\s*:[ \t]*)([^\n,}#]*?)(?=[ \t]*(?:#|,|}|$))",
                re.M,
            )
        found = list(pat.finditer(block))
        if len(found) != 1:
            raise RevisionError(
                f"{path}:{index + 1}: cannot find exactly one {field!r} in record "
                f"{record_id!r}; edit it by hand"
            )
        m = found[0]
        old = m.group(2)
        before[field] = old.strip().strip("\"'")
        value = json.dumps(text) if json_style and not _is_number(text) else text
        if not json_style and not _is_number(text):
            value = json.dumps(text) if old.strip().startswith('"') else text
        block = block[: m.start(2)] + value + block[m.end(2) :]
    if f"{record_id}" not in block:
        raise RevisionError(f"{path}:{index + 1}: record {record_id!r} is not here any more")
    return block, before, end


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


@dataclass
class Edit:
    """One correction of one record: where, what changes, and the record's text before and
    after (``data``, the whole file as it becomes, is made only when asked for: to write it).
    """

    file: str
    line: int
    before: dict[str, str]
    after: dict[str, str]
    line_before: str
    line_after: str
    _file: FileText
    _span: tuple[int, int]  # the record's lines, [start, end)

    @property
    def data(self) -> bytes:
        """The whole file as the edit makes it (bytes, its byte-order mark kept)."""
        lines, (start, end) = self._file.lines, self._span
        out = "".join(lines[:start]) + self.line_after + "".join(lines[end:])
        return (b"\xef\xbb\xbf" if self._file.bom else b"") + out.encode("utf-8")


@dataclass(frozen=True)
class FileText:
    """A table file's lines as the readers count them, and whether it starts with a BOM."""

    bom: bool
    lines: list[str]

    @classmethod
    def read(cls, path: Path) -> FileText:
        """The file at ``path``, decoded as UTF-8 (its BOM noted, not kept in the lines)."""
        raw = path.read_bytes()
        bom = raw.startswith(b"\xef\xbb\xbf")
        return cls(bom, split_lines(raw[3:].decode("utf-8") if bom else raw.decode("utf-8")))


def _edit_file(
    path: Path,
    line: int,
    record_id: str,
    changes: dict[str, str],
    files: dict[str, FileText] | None = None,
) -> Edit:
    """The edit of the record at ``line`` of ``path`` (nothing written). ``files`` keeps
    each file read once for many edits that are only shown (a SARIF log's fixes); an edit
    that is applied reads its file afresh, under the table's lock.
    """
    text = None if files is None else files.get(str(path))
    if text is None:
        text = FileText.read(path)
        if files is not None:
            files[str(path)] = text
    lines = text.lines
    index = line - 1
    if not 0 <= index < len(lines):
        raise RevisionError(f"{path}: has no line {line}; run the audit again")
    suffix = path.suffix.lower()
    if suffix in (".csv", ".tsv", ".txt"):
        new_block, before, end = _edit_csv(lines, index, record_id, changes, path)
    elif suffix in (".yaml", ".yml", ".json"):
        new_block, before, end = _edit_mapping(
            lines, index, record_id, changes, path, suffix == ".json"
        )
    else:
        raise RevisionError(
            f"{path}: {suffix} files are not edited in place (binary); write the corrected "
            "record to a CSV, YAML or JSON file instead"
        )
    old_block = "".join(lines[index:end])
    return Edit(str(path), line, before, dict(changes), old_block, new_block, text, (index, end))


def _text(value: Any) -> str:
    if isinstance(value, str):
        return value
    return repr(float(value))


def apply_correction(
    table: str | Path,
    record: str,
    file: str,
    line: int,
    corrected: dict[str, Any],
    corrected_text: dict[str, str] | None = None,
    *,
    reason: str,
    finding: str | None = None,
    by: str | None = None,
    suggestion: dict | None = None,
) -> dict:
    """Write a corrected record as a new revision.

    Parameters
    ----------
    table : path
        The table directory (or single table file).
    record : str
        The record's id.
    file, line : str, int
        Where the record stands (from the finding or the table).
    corrected : dict
        Field -> new value.
    corrected_text : dict, optional
        Field -> the exact text to write (numbers); ``repr`` of the value otherwise.
    reason : str
        Why (kept in the log).
    finding : str, optional
        The finding it answers (``check:id,id``).
    by : str, optional
        Who (default: git user.name, else the login name).
    suggestion : dict, optional
        The diagnosis suggestion applied, kept in the log.

    Returns
    -------
    dict
        The log entry written.
    """
    texts = {f: (corrected_text or {}).get(f) or _text(v) for f, v in corrected.items()}
    log = history_path(table)
    with file_lock(_root(table), what=f"the table {table}"):
        _settle(log)
        edit = _edit_file(Path(file), int(line), record, texts)
        revision = 1 + sum(1 for e in _read_log(log) if e["record"] == record)
        entry = {
            "record": record,
            "revision": revision,
            "when": _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds"),
            "by": _who(by),
            "why": reason,
            "finding": finding,
            "file": edit.file,
            "line": edit.line,
            "before": edit.before,
            "after": edit.after,
            "line_before": edit.line_before,
            "line_after": edit.line_after,
            "suggestion": suggestion,
        }
        # Write-ahead: the intent is on disk before the table file changes, and its
        # completion after, so a process killed in between leaves an entry that the next
        # apply or history settles from what the file shows.
        txn = uuid.uuid4().hex
        append_line(log, json.dumps({**entry, "txn": txn, "state": "pending"}, sort_keys=True))
        write_atomic(edit.file, edit.data)
        append_line(log, json.dumps({"txn": txn, "state": "done"}, sort_keys=True))
    return entry


def _log_lines(log: Path) -> list[dict]:
    if not log.is_file():
        return []
    lines = split_lines(log.read_text(encoding="utf-8"))
    out = []
    for k, ln in enumerate(lines, 1):
        if ln.strip():
            try:
                out.append(json.loads(ln))
            except json.JSONDecodeError as exc:
                if k == len(lines) and not ln.endswith("\n"):
                    continue  # a last line cut short by a kill: its revision never began
                raise TableError(f"not a JSON line: {exc}", Location(str(log), k)) from None
    return out


def _applied(entry: dict) -> bool:
    """Whether the table file shows a pending revision's change: the record's line(s), where
    the revision put them, as it made them.
    """
    try:
        raw = Path(entry["file"]).read_bytes()
    except OSError:
        return False
    text = raw.decode("utf-8", "replace").removeprefix("\ufeff")
    lines = split_lines(text)
    return "".join(lines[entry["line"] - 1 :]).startswith(entry["line_after"])


def _read_log(log: Path) -> list[dict]:
    """The revisions of the log, oldest first: completed ones, and pending ones (a process
    killed between writing the table file and the log's completion) whose change the file
    shows; a pending one the file does not show never happened and is left out.
    """
    lines = _log_lines(log)
    settled = {e["txn"]: e["state"] for e in lines if "record" not in e and "txn" in e}
    out = []
    for e in lines:
        if "record" not in e:
            continue
        state = settled.get(e.get("txn"), "done" if "txn" not in e else e.get("state"))
        if state == "pending":
            state = "done" if _applied(e) else "abandoned"
        if state == "done":
            out.append({k: v for k, v in e.items() if k not in ("txn", "state")})
    return out


def _settle(log: Path) -> None:
    """Write the outcome of every pending revision into the log (under the apply lock)."""
    lines = _log_lines(log)
    settled = {e["txn"] for e in lines if "record" not in e and "txn" in e}
    for e in lines:
        if e.get("state") == "pending" and e["txn"] not in settled:
            state = "done" if _applied(e) else "abandoned"
            append_line(log, json.dumps({"txn": e["txn"], "state": state}, sort_keys=True))


def history(table: str | Path, record: str) -> list[dict]:
    """Every revision of ``record``: revision 0 (as first entered, from the log) and each
    applied correction, oldest first. A record never corrected has no entries; a revision
    whose process was killed half-way counts if the table file shows its change.
    """
    entries = [e for e in _read_log(history_path(table)) if e["record"] == record]
    if not entries:
        return []
    first = entries[0]
    origin = {
        "record": record,
        "revision": 0,
        "when": None,
        "by": None,
        "why": "as entered",
        "finding": None,
        "file": first["file"],
        "line": first["line"],
        "before": {},
        "after": {},
        "line_before": None,
        "line_after": first["line_before"],
    }
    return [origin, *entries]


def parse_finding(spec: str) -> tuple[str, list[str]]:
    """``CHECK:RECORD[,RECORD...]`` -> (check, record ids)."""
    if ":" not in spec:
        raise RevisionError(
            f"name the finding as CHECK:RECORD[,RECORD] (as the audit prints it), not {spec!r}"
        )
    check, records = spec.split(":", 1)
    ids = [r.strip() for r in records.split(",") if r.strip()]
    if not ids:
        raise RevisionError(f"{spec!r} names no record")
    return check.strip(), ids


def find_finding(result, check: str, ids: list[str]):
    """The finding of ``result`` with this check and these record ids (in any order)."""
    want = sorted(ids)
    for f in result.findings:
        if f.check == check and sorted(f.records) == want:
            return f
    near = [f.spec for f in result.findings if set(ids) & set(f.records)]
    hint = f"; findings on these records: {', '.join(near)}" if near else ""
    raise RevisionError(f"no finding {check}:{','.join(ids)} in the audit{hint}")


def suggestion_edits(suggestion: dict, files: dict[str, FileText] | None = None) -> list[Edit]:
    """The edits applying ``suggestion`` would make, one per record it corrects, computed
    from the files as they are and written nowhere: what ``review`` shows before it asks,
    and the exact replacements a SARIF fix carries. ``files`` (path -> :class:`FileText`)
    keeps each file read once for many suggestions.

    Raises
    ------
    RevisionError
        When the suggestion carries no location, or its record is no longer where it was.
    """
    parts = [(suggestion, suggestion.get("corrected_text"))]
    parts += [(a, None) for a in suggestion.get("also", [])]
    edits = []
    for part, texts in parts:
        where = part.get("location")
        if not where:
            raise RevisionError(f"the suggestion for {part['record']!r} says not where it stands")
        changes = {f: (texts or {}).get(f) or _text(v) for f, v in part["corrected"].items()}
        at = Path(where["file"])
        edits.append(_edit_file(at, int(where["line"]), part["record"], changes, files))
    return edits


def apply_suggestion(
    table_path: str | Path, table, finding, reason: str | None = None, by: str | None = None
) -> list[dict]:
    """Apply the diagnosis suggestion of ``finding`` to the table files, one revision per
    record it corrects (a phase swap corrects two). Returns the log entries.
    """
    sug = finding.suggestion
    if not sug:
        raise RevisionError(
            f"finding {finding.spec} carries no suggestion "
            "(the evidence does not single out one fix); correct the record by hand"
        )
    spec = finding.spec
    # every explanation names its kind and confidence ("[sign, confidence 0.99]")
    why = reason or sug["explanation"]
    rec = table.records
    ids = rec["id"].astype(object)
    edits = [(sug["record"], sug["corrected"], sug.get("corrected_text"))]
    edits += [(a["record"], a["corrected"], None) for a in sug.get("also", [])]
    entries = []
    for rid, corrected, texts in edits:
        rows = (ids == rid).to_numpy().nonzero()[0]
        if len(rows) != 1:
            raise RevisionError(f"record {rid!r} is not exactly once in the table")
        r = int(rows[0])
        entries.append(
            apply_correction(
                table_path,
                rid,
                str(rec["file"].iat[r]),
                int(rec["line"].iat[r]),
                corrected,
                texts,
                reason=why,
                finding=spec,
                by=by,
                suggestion=sug,
            )
        )
    return entries


@dataclass(frozen=True)
class Applied:
    """What :func:`apply_finding` did: the revision log entries it wrote, the substances it
    audited again, and the errors and warnings that remain on them (the findings, errors
    first).
    """

    entries: list[dict]
    substances: list[str]
    left: list[Finding]

    @property
    def remaining(self) -> int:
        """How many errors and warnings remain."""
        return len(self.left)


def apply_finding(
    table_path: str | Path, spec: str, reason: str | None = None, by: str | None = None
) -> Applied:
    """Audit the substances of finding ``spec`` (``CHECK:RECORD[,RECORD]``), apply its
    suggested fix as new revisions of the table files, and audit them again.

    Raises
    ------
    RevisionError
        When ``spec`` is malformed, names no finding of the audit, or the finding carries
        no suggestion.
    """
    from .api import open_table
    from .auditing import audit_table
    from .policy import load_policy

    check, ids = parse_finding(spec)
    table = open_table(table_path)
    records = table.records
    subs = sorted(set(records.loc[records["id"].isin(ids), "substance"].astype(object)))
    policy = load_policy(table.policy_path)
    result = audit_table(table, policy, substances=subs or None)
    finding = find_finding(result, check, ids)
    if not finding.suggestion:
        # a fix suggested for the substance on another finding, which it does not explain
        other = next(
            (f for f in result.findings if f.substance == finding.substance and f.suggestion),
            None,
        )
        if other is not None:
            raise RevisionError(
                f"finding {finding.spec} carries no suggestion: "
                f"the fix suggested for {finding.substance} "
                f"({other.spec}) does not explain it; apply that "
                "one, or correct the record by hand"
            )
    entries = apply_suggestion(table_path, table, finding, reason, by)
    return Applied(entries, subs, what_remains(table_path, subs))


def what_remains(table_path: str | Path, substances: list[str]) -> list[Finding]:
    """Audit ``substances`` of the table at ``table_path`` again (as its files now are,
    under its own policy) and return their errors and warnings, errors first: what a fix
    left.
    """
    from .api import open_table
    from .auditing import audit_table
    from .policy import load_policy

    table = open_table(table_path)
    after = audit_table(table, load_policy(table.policy_path), substances=substances or None)
    return sorted(
        (g for g in after.findings if g.severity.rank >= 1), key=lambda g: -g.severity.rank
    )


def review_offers(result, min_confidence: float = 0.0) -> list:
    """The findings whose suggested fix ``review`` offers: at least ``min_confidence``
    confident, one per corrected record (the first, i.e. the most severe, finding on it).
    """
    seen, offers = set(), []
    for f in result.findings:
        s = f.suggestion
        if s and s["confidence"] >= min_confidence and s["record"] not in seen:
            seen.add(s["record"])
            offers.append(f)
    return offers


def add_records(path: str | Path, table, records: list[dict], findings, force: bool = False) -> int:
    """Append new records (a fit's result) to the records file ``path``, refusing an id the
    table already holds and, unless ``force``, records that draw errors in ``findings``
    (their audit beside the substance's other records). Returns the first new line.

    Raises
    ------
    VpauditError
        On an id clash, or on errors without ``force``; nothing is written then.
    """
    from .writers import append_records

    known = set(table.records["id"].astype(object))
    clash = [r["id"] for r in records if r["id"] in known]
    if clash:
        raise VpauditError(
            f"the table already holds a record with id {', '.join(map(repr, clash))}; "
            "give the new record another id with --id"
        )
    errors = sum(f.severity.value == "error" for f in findings)
    if errors and not force:
        raise VpauditError(
            f"not written: the new record draws {errors} error(s) beside its substance's "
            "other records (above); --force writes it anyway"
        )
    return append_records(path, records)
