"""Print the reliability figures quoted in the README: crash trials, hostile inputs, refused
queries. Each figure is measured by this run.

    python benchmarks/reliability.py [--trials 50]
"""

from __future__ import annotations

import argparse
import csv
import json
import random
import shutil
import signal
import subprocess
import sys
import tempfile
import time
from collections.abc import Iterator
from pathlib import Path

import duckdb

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "benchmarks"))

from synth import generate  # noqa: E402

from vpaudit.errors import StoreError, TableError, VpauditError  # noqa: E402
from vpaudit.readers import load_table, read_file  # noqa: E402
from vpaudit.store import import_table, manifest, query, read_table, verify  # noqa: E402

# A child that imports vpaudit, says it is ready, and imports the table when told to: so the
# kill lands inside the import itself, not in the interpreter's start-up (about 1 s, in
# which nothing is written; before 5 December 2026 about two in five kills landed there).
CHILD = """
import sys
from vpaudit.store import import_table
print("ready", flush=True)
if sys.stdin.readline().strip() == "go":  # not at the end of input: a trial given up
    import_table(sys.argv[1], sys.argv[2])
    print("done", flush=True)
"""


def content(db: Path) -> dict:
    con = duckdb.connect(str(db))
    try:
        con.execute("CHECKPOINT")
        return manifest(read_table(con))
    finally:
        con.close()


def _importer(new: Path, db: Path) -> subprocess.Popen:
    """Start a child that will import ``new`` into ``db`` once told to (:data:`CHILD`)."""
    for p in db.parent.glob(db.name + "*"):
        p.unlink()
    return _started([CHILD, str(new), str(db)])


def _go(child: subprocess.Popen, delay: float | None) -> float:
    """Tell a started child (:data:`CHILD`, :data:`WRITER`) to write and SIGKILL it
    ``delay`` seconds later (None: let it finish). Returns the seconds from the word to the
    kill or to the child's "done" (its interpreter's teardown after the write is not
    counted)."""
    with child:
        assert child.stdout.readline().strip() == "ready"
        t0 = time.perf_counter()
        child.stdin.write("go\n")
        child.stdin.flush()
        if delay is None:
            assert child.stdout.readline().strip() == "done"
            elapsed = time.perf_counter() - t0
            child.wait()
            return elapsed
        time.sleep(max(delay - 0.05, 0.0))
        while time.perf_counter() - t0 < delay:
            pass  # a busy wait: sleep() is too coarse for a window of milliseconds
        child.send_signal(signal.SIGKILL)
        child.wait()
        return time.perf_counter() - t0


def _started(args: list[str]) -> subprocess.Popen:
    return subprocess.Popen(
        [sys.executable, "-c", *args],
        stdin=subprocess.PIPE,
        stdout=subprocess.PIPE,
        stderr=subprocess.DEVNULL,
        text=True,
    )


def _judged(db: Path) -> tuple[dict, bool]:
    """The manifest of what ``db`` holds (opened the plain DuckDB way) and whether vpaudit's
    verify() accepts it exactly when the manifest beside it matches that content."""
    state = content(db)
    for p in db.parent.glob(db.name + ".wal"):
        p.unlink()  # content() checkpointed it into the file
    side = json.loads(db.with_name(db.name + ".manifest.json").read_text())
    try:
        verify(db)
        ok = True
    except StoreError:
        ok = False
    return state, ok == (side == state)


def crash_trial_runs(
    old: Path, new: Path, work: Path, delays: list[float]
) -> Iterator[tuple[dict, bool]]:
    """One trial per delay: import ``old`` into a store, have a child import ``new`` over it,
    SIGKILL the child ``delay`` seconds after it was told to start; yields what
    :func:`_judged` says of the store. The next trial's child starts (its interpreter and
    imports, about 1 s) while this trial's store is judged; the two trials' stores are
    different files in ``work``."""
    dbs = (work / "crash-a.duckdb", work / "crash-b.duckdb")
    child = _importer(new, dbs[0]) if delays else None
    try:
        for i, delay in enumerate(delays):
            db = dbs[i % 2]
            import_table(old, db)  # while the child starts: it opens nothing before the word
            _go(child, delay)
            child = _importer(new, dbs[(i + 1) % 2]) if i + 1 < len(delays) else None
            yield _judged(db)
    finally:  # the trials given up (a failed assertion of the caller): no child left waiting
        if child is not None and child.poll() is None:
            child.kill()
            child.communicate()


def import_seconds(table: Path, db: Path) -> float:
    """The seconds a child takes to import ``table`` into ``db`` once told to (the longest
    of two): the window the kills of :func:`crash_trial_runs` are spread over is 1.2 times
    it."""
    return max(_go(_importer(table, db), None) for _ in range(2))


def crash_trials(work: Path, trials: int) -> None:
    old = work / "old"
    new = work / "new"
    generate(old, 200, seed=1, defect_rate=0.0)
    generate(new, 20_000, seed=2, defect_rate=0.0)
    old_m, new_m = manifest(load_table(old)), manifest(load_table(new))
    full = import_seconds(new, work / "s.duckdb")
    rng = random.Random(1)
    counts = {"old": 0, "new": 0, "neither": 0, "verify agreed": 0}
    delays = [rng.uniform(0.0, 1.2 * full) for _ in range(trials)]
    for state, agreed in crash_trial_runs(old, new, work, delays):
        counts["old" if state == old_m else "new" if state == new_m else "neither"] += 1
        counts["verify agreed"] += agreed
    print(
        f"crash trials (SIGKILL at random moments of a {new_m['records']['rows']}-record "
        f"import): {trials}; store left in the old state {counts['old']}, the new state "
        f"{counts['new']}, anything else {counts['neither']}; manifest check agreed with "
        f"the content {counts['verify agreed']}/{trials}"
    )


# A child that imports vpaudit, says it is ready, and writes when told to: so a kill lands
# inside the write itself, not in the interpreter's start-up.
WRITER = """
import sys
from vpaudit.gate import accept
from vpaudit.revisions import apply_correction
table, what = sys.argv[1], sys.argv[2]
print("ready", flush=True)
sys.stdin.readline()
if what == "apply":
    apply_correction(table, "dorvane-s1", table + "/records/metals.csv", 8,
                     {"B": -9842.23737}, {"B": "-9842.23737"}, reason="trial", by="trial")
else:
    accept(table, "range-gap:ardenite-s1", "trial", by="trial")
print("done", flush=True)
"""


def write_once(table: Path, what: str, delay: float | None) -> float:
    """Run one ``apply`` or ``accept`` in a child; SIGKILL it ``delay`` seconds after it was
    told to write (None: let it finish). Returns the seconds from the word to the end."""
    return _go(_started([WRITER, str(table), what]), delay)


def write_trial(demo: Path, work: Path, what: str, delay: float | None) -> str:
    """One kill trial of ``apply`` or ``accept`` on a fresh copy of the demo table.

    Returns "old", "new" or "torn": the file written is byte for byte as before or as after,
    and (for apply) the revision log agrees with it: one revision exactly when the record
    changed, and the next apply still works.
    """
    from vpaudit.gate import load_accepted
    from vpaudit.revisions import apply_correction, history

    table = work / f"t-{what}"
    if table.exists():
        shutil.rmtree(table)
    shutil.copytree(demo, table, ignore=shutil.ignore_patterns("*.py", "*.md", "PLANTED*"))
    target = table / ("records/metals.csv" if what == "apply" else "accepted.toml")
    old = target.read_bytes() if target.exists() else None
    write_once(table, what, delay)
    now = target.read_bytes() if target.exists() else None
    if what == "accept":
        try:
            n = len(load_accepted(target))
        except Exception:  # noqa: BLE001  (a torn file is what is counted)
            return "torn"
        return "old" if now == old and n == 0 else "new" if n == 1 else "torn"
    revised = now != old
    if revised and b",-9842.23737," not in now:
        return "torn"
    try:
        if len(history(table, "dorvane-s1")) != (2 if revised else 0):
            return "torn"
        apply_correction(
            table,
            "galdrite-l1",
            str(table / "records/metals.csv"),
            15,
            {"A": 10.7706297},
            reason="after the trial",
        )
    except Exception:  # noqa: BLE001
        return "torn"
    return "new" if revised else "old"


def write_trials(work: Path, trials: int, seed: int = 1) -> dict[str, dict[str, int]]:
    """SIGKILL ``apply`` and ``accept`` at random moments of their write; the window is 1.2
    times the write's own duration, measured first in the same way."""
    demo = ROOT / "sample_db"
    rng = random.Random(seed)
    out = {}
    for what in ("apply", "accept"):
        table = work / f"t-{what}"
        window = 0.0
        for _ in range(3):  # the longest of three whole writes
            if table.exists():
                shutil.rmtree(table)
            shutil.copytree(demo, table, ignore=shutil.ignore_patterns("*.py", "*.md", "PLANTED*"))
            window = max(window, write_once(table, what, None))
        counts = {"old": 0, "new": 0, "torn": 0, "window_ms": round(1200 * window, 1)}
        for _ in range(trials):
            counts[write_trial(demo, work, what, rng.uniform(0.0, 1.2 * window))] += 1
        out[what] = counts
    return out


def write_report(work: Path, trials: int) -> None:
    for what, c in write_trials(work, trials).items():
        print(
            f"kill trials of {what} (SIGKILL at random moments of a {c['window_ms']} ms window "
            f"around its write): {trials}; left as before {c['old']}, as after {c['new']}, "
            f"anything else {c['torn']}"
        )


def hostile() -> None:
    corpus = ROOT / "tests" / "data" / "hostile"
    with open(corpus / "expected.csv", encoding="utf-8") as fh:
        cases = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    located = read_ok = 0
    for case in cases:
        try:
            read_file(corpus / case["file"])
            read_ok += case["expect"] == "OK"
        except TableError as exc:
            errors = getattr(exc, "errors", [exc])
            located += any(case["expect"] in e.message and e.location for e in errors)
    bad = sum(c["expect"] != "OK" for c in cases)
    print(
        f"hostile inputs: {len(cases)} files; {located}/{bad} refused with the expected "
        f"located error, {read_ok}/{len(cases) - bad} read exactly"
    )


def queries(work: Path) -> None:
    table = load_table(ROOT / "tests" / "data" / "hostile" / "bom_crlf_ok.csv")
    attempts = [
        "select * from read_csv('/etc/passwd')",
        "select * from read_text('/etc/hosts')",
        "copy records to 'x.csv'",
        "attach 'x.duckdb'",
        "install httpfs",
        "set enable_external_access = true",
        "select 1; select 2",
        "pragma version",
        "select * from glob('/*')",
    ]
    refused = 0
    for sql in attempts:
        try:
            query(table, sql)
        except VpauditError:
            refused += 1
    print(f"queries reaching outside the database: {len(attempts)} tried, {refused} refused")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--trials", type=int, default=50)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        crash_trials(Path(tmp), args.trials)
        write_report(Path(tmp), args.trials)
        hostile()
        queries(Path(tmp))


if __name__ == "__main__":
    main()
