"""Print the reliability figures quoted in the README: crash trials, hostile inputs, refused
queries. Each figure is measured by this run.

    python benchmarks/reliability.py [--trials 50]
"""

from __future__ import annotations

import argparse
import csv
import json
import random
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import duckdb

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "benchmarks"))

from synth import generate  # noqa: E402

from vpaudit.errors import StoreError, TableError, VpauditError  # noqa: E402
from vpaudit.readers import load_table, read_file  # noqa: E402
from vpaudit.store import import_table, manifest, query, read_table, verify  # noqa: E402

CHILD = "import sys; from vpaudit.store import import_table; import_table(sys.argv[1], sys.argv[2])"


def content(db: Path) -> dict:
    con = duckdb.connect(str(db))
    try:
        con.execute("CHECKPOINT")
        return manifest(read_table(con))
    finally:
        con.close()


def crash_trial(old: Path, new: Path, db: Path, delay: float) -> tuple[dict, bool]:
    """Import ``old`` into ``db``, start importing ``new`` in a child process, SIGKILL it
    after ``delay`` seconds. Returns the manifest of what the store then holds (opened the
    plain DuckDB way) and whether vpaudit's verify() accepted the store exactly when the
    manifest beside it matches that content."""
    for p in db.parent.glob(db.name + "*"):
        p.unlink()
    import_table(old, db)
    child = subprocess.Popen(
        [sys.executable, "-c", CHILD, str(new), str(db)],
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
    )
    time.sleep(delay)
    child.send_signal(signal.SIGKILL)
    child.wait()
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


def import_seconds(table: Path, db: Path) -> float:
    """Wall time of one import of ``table`` plus the child's Python start-up (about 0.5 s)."""
    t0 = time.perf_counter()
    import_table(table, db)
    return time.perf_counter() - t0 + 0.5


def crash_trials(work: Path, trials: int) -> None:
    old = work / "old"
    new = work / "new"
    generate(old, 200, seed=1, defect_rate=0.0)
    generate(new, 20_000, seed=2, defect_rate=0.0)
    old_m, new_m = manifest(load_table(old)), manifest(load_table(new))
    db = work / "s.duckdb"
    full = import_seconds(new, db)
    rng = random.Random(1)
    counts = {"old": 0, "new": 0, "neither": 0, "verify agreed": 0}
    for _ in range(trials):
        state, agreed = crash_trial(old, new, db, rng.uniform(0.0, 1.2 * full))
        counts["old" if state == old_m else "new" if state == new_m else "neither"] += 1
        counts["verify agreed"] += agreed
    print(
        f"crash trials (SIGKILL at random moments of a {new_m['records']['rows']}-record "
        f"import): {trials}; store left in the old state {counts['old']}, the new state "
        f"{counts['new']}, anything else {counts['neither']}; manifest check agreed with "
        f"the content {counts['verify agreed']}/{trials}"
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
        hostile()
        queries(Path(tmp))


if __name__ == "__main__":
    main()
