"""Measure vpaudit's audit at scale against the bare read of the same files and against a
straightforward per-record audit a user might script.

For each N (substances; two records each, a solid and a liquid, ~3 % planted defects) it
prints, from one run on this machine:

* ``floor``: DuckDB ``read_csv`` (all columns as text) of the same CSV files into tables;
* ``vpaudit``: ``vpaudit audit DIR --format json --diagnose-limit 0`` end to end (CSV files
  to findings; the checks alone, as the baseline has them);
* ``+diag``: the same with the default diagnosis (the likely slip behind the errors and
  warnings of up to 1000 substances, worst first);
* ``baseline``: a per-record Python audit (pydantic per record, a 50-point grid per record,
  ``scipy.optimize.brentq`` per pair) of five checks both implement;
* the ratios, the peak memory of each process, and vpaudit's time per substance.

It also asserts that vpaudit and the baseline flag the same substances for those five
checks (slope-not-positive, heat-capacity-sign, melting-point-mismatch, no-crossing,
crossing-orientation). Each measurement runs in its own process.

    python benchmarks/audit_scale.py                  # N = 1e3, 1e4, 1e5, 1e6
    python benchmarks/audit_scale.py --sizes 1000,100000
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
SHARED = (
    "slope-not-positive",
    "heat-capacity-sign",
    "melting-point-mismatch",
    "no-crossing",
    "crossing-orientation",
)


def _peak_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


# --- child processes ------------------------------------------------------------------------


def child_floor(folder: str) -> None:
    import duckdb

    con = duckdb.connect()
    con.execute("SET enable_progress_bar = false")
    for kind in ("records", "references"):
        path = str(Path(folder) / kind / f"{kind}.csv")
        con.execute(
            f'CREATE TABLE "{kind}" AS SELECT * FROM read_csv(?, all_varchar = true, '
            "header = true)",
            [path],
        )
    n = con.execute("SELECT count(*) FROM records").fetchone()[0]
    print(json.dumps({"rows": n, "peak_mb": _peak_mb()}), file=sys.stderr)


def child_vpaudit(folder: str, out: str, limit: str = "1000") -> None:
    from vpaudit.cli import main

    try:
        main(
            [
                "audit",
                folder,
                "--format",
                "json",
                "--output",
                out,
                "--fail-on",
                "never",
                "--diagnose-limit",
                limit,
            ]
        )
    except SystemExit as exc:
        if exc.code not in (0, None):
            raise
    finally:
        print(json.dumps({"peak_mb": _peak_mb()}), file=sys.stderr)


def child_baseline(folder: str, out: str) -> None:
    """The straightforward audit: one record, one pair at a time."""
    import csv

    import numpy as np
    from scipy.constants import R
    from scipy.optimize import brentq

    from vpaudit.schema import CoefficientRecord

    numbers = ("A", "B", "C", "t_min", "t_max", "uncertainty")
    records = []
    with open(Path(folder) / "records" / "records.csv", newline="") as fh:
        for row in csv.DictReader(fh):
            data = {k: (float(v) if k in numbers else v) for k, v in row.items() if v != ""}
            records.append(CoefficientRecord.model_validate(data))
    tm = {}
    with open(Path(folder) / "references" / "references.csv", newline="") as fh:
        for row in csv.DictReader(fh):
            if row["quantity"] == "melting_point":
                tm[row["substance"]] = float(row["value"])
    flagged = {c: set() for c in SHARED}

    def y(r, t):
        return r.A + r.B / t + r.C * np.log(t)

    def dy(r, t):
        return -r.B / t**2 + r.C / t

    by_sub: dict[str, dict[str, list]] = {}
    for r in records:
        t = np.linspace(r.t_min, r.t_max, 50)
        h = R * t * t * dy(r, t)
        cp = np.full_like(t, R * r.C)
        if h.min() <= 0:
            flagged["slope-not-positive"].add(r.substance)
        ideal = np.exp(y(r, t)) <= 1e4
        if ideal.any() and cp[ideal].max() > 10.0:
            flagged["heat-capacity-sign"].add(r.substance)
        by_sub.setdefault(r.substance, {"solid": [], "liquid": []})[r.phase.value].append(r)
    for name, phases in by_sub.items():
        for s in phases["solid"]:
            for liq in phases["liquid"]:
                m = tm.get(name)
                if m is None:
                    continue
                if s.t_max <= s.t_min or liq.t_max <= liq.t_min:
                    continue
                if abs(y(s, m) - y(liq, m)) > 0.05:
                    flagged["melting-point-mismatch"].add(name)
                x = np.linspace(1.0 / (1.3 * m), 1.3 / m, 32)
                f = y(s, 1 / x) - y(liq, 1 / x)
                change = np.flatnonzero(np.sign(f[1:]) * np.sign(f[:-1]) < 0)
                if change.size == 0:
                    flagged["no-crossing"].add(name)
                    continue
                mid = 0.5 * (x[change] + x[change + 1])
                j = change[np.argmin(np.abs(mid - 1.0 / m))]
                root = brentq(
                    lambda xx, s=s, liq=liq: y(s, 1 / xx) - y(liq, 1 / xx), x[j], x[j + 1]
                )
                t = 1.0 / root
                if not dy(s, t) - dy(liq, t) > 0:
                    flagged["crossing-orientation"].add(name)
    Path(out).write_text(json.dumps({k: sorted(v) for k, v in flagged.items()}))
    print(json.dumps({"peak_mb": _peak_mb()}), file=sys.stderr)


# --- the parent -----------------------------------------------------------------------------


def _run(*args: str) -> tuple[float, dict]:
    t0 = time.perf_counter()
    proc = subprocess.run([sys.executable, __file__, *args], capture_output=True, text=True)
    wall = time.perf_counter() - t0
    if proc.returncode != 0:
        raise SystemExit(f"child {args[0]} failed:\n{proc.stderr}")
    info = json.loads(proc.stderr.strip().splitlines()[-1])
    return wall, info


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="1000,10000,100000,1000000")
    ap.add_argument("--workdir", default=None)
    args = ap.parse_args()
    sys.path.insert(0, str(HERE))
    from synth import generate

    sizes = [int(float(s)) for s in args.sizes.split(",")]
    work = Path(args.workdir or tempfile.mkdtemp(prefix="vpaudit-bench-"))
    print(
        f"machine: {platform.machine()}, {os.cpu_count()} cores, Python "
        f"{platform.python_version()}, {platform.platform()}"
    )
    print(
        f"{'N':>9} {'floor s':>8} {'vpaudit s':>9} {'baseline s':>10} {'vp/floor':>8} "
        f"{'base/vp':>7} {'us/subst':>8} {'vp MB':>7} {'base MB':>7}  agree {'+diag s':>8}"
    )
    for n in sizes:
        folder = work / f"n{n}"
        if not (folder / "records" / "records.csv").exists():
            generate(folder, n)
        floor, fi = _run("--child-floor", str(folder))
        vp, vi = _run("--child-vpaudit", str(folder), str(folder / "vpaudit.json"), "0")
        diag, _ = _run("--child-vpaudit", str(folder), str(folder / "diagnosed.json"), "1000")
        base, bi = _run("--child-baseline", str(folder), str(folder / "baseline.json"))
        found = json.loads((folder / "vpaudit.json").read_text())["findings"]
        ours = {c: sorted({f["substance"] for f in found if f["check"] == c}) for c in SHARED}
        theirs = json.loads((folder / "baseline.json").read_text())
        agree = all(ours[c] == theirs[c] for c in SHARED)
        print(
            f"{n:>9} {floor:>8.2f} {vp:>9.2f} {base:>10.2f} {vp / floor:>8.2f} "
            f"{base / vp:>7.1f} {vp / n * 1e6:>8.2f} {vi['peak_mb']:>7.0f} "
            f"{bi['peak_mb']:>7.0f}  {'yes' if agree else 'NO':>5} {diag:>8.2f}",
            flush=True,
        )
        if not agree:
            for c in SHARED:
                a, b = set(ours[c]), set(theirs[c])
                if a != b:
                    print(
                        f"   {c}: only vpaudit {sorted(a - b)[:5]}, only baseline "
                        f"{sorted(b - a)[:5]}"
                    )
            raise SystemExit("vpaudit and the baseline disagree")


if __name__ == "__main__":
    if len(sys.argv) > 1 and sys.argv[1] == "--child-floor":
        child_floor(sys.argv[2])
    elif len(sys.argv) > 1 and sys.argv[1] == "--child-vpaudit":
        child_vpaudit(sys.argv[2], sys.argv[3], *sys.argv[4:5])
    elif len(sys.argv) > 1 and sys.argv[1] == "--child-baseline":
        child_baseline(sys.argv[2], sys.argv[3])
    else:
        main()
