"""Check that a refactor leaves vpaudit's output byte for byte the same.

Renders a fixed set of outputs with the code of two git revisions (each from its own
``git worktree``, run as ``python -m vpaudit.cli`` with that tree first on the path) and
compares them: the demo table audited in every report format (with the diagnosis), two
synthetic tables (``synth.py``), fits of five forms to the demo's points, exact conversions
and refits, ``show``, and the gate on a copy of the demo in a git repository (one record
changed since the base commit; an acceptance in use, one expired, one unused) in three
formats. Any command that fails, in either revision, is reported as a
failure -- never skipped -- and any output that differs is named.

    python benchmarks/same_output.py                # HEAD against the working tree
    python benchmarks/same_output.py --base main~3  # another base revision
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "sample_db")
FORMATS = ("json", "sarif", "text", "markdown", "csv")
#: (phase, form) fitted to ardenite's points (4 liquid, 5 solid: a fit needs more points
#: than coefficients).
FITS = (
    ("liquid", "two-term"),
    ("liquid", "three-term"),
    ("liquid", "antoine"),
    ("solid", "four-term-t"),
    ("solid", "four-term-cube"),
)


def commands(synth: Path) -> dict[str, list[str]]:
    """Output name -> the vpaudit arguments that make it."""
    out = {f"audit.{fmt}": ["audit", DEMO, "--format", fmt] for fmt in FORMATS}
    for name in ("synth1", "synth2"):
        out[f"{name}.json"] = ["audit", str(synth / name), "--format", "json"]
    for phase, form in FITS:
        out[f"fit-{form}.txt"] = [
            "fit", DEMO, "--substance", "ardenite", "--phase", phase, "--form", form
        ]  # fmt: skip
    out["fit-pair.txt"] = ["fit", DEMO, "--substance", "ardenite", "--pair"]
    for rec in ("kestrium-l1", "rostane-s1"):
        for base in ("e", "10"):
            for unit in ("Pa", "Torr"):
                out[f"convert-{rec}-{base}-{unit}.csv"] = [
                    "convert", DEMO, rec, "--log-base", base, "--pressure-unit", unit
                ]  # fmt: skip
        out[f"convert-{rec}-antoine.csv"] = [
            "convert", DEMO, rec, "--form", "antoine", "--max-deviation", "0.1"
        ]  # fmt: skip
    for sub in ("kestrium", "rostane", "elmsite"):
        out[f"show-{sub}.txt"] = ["show", DEMO, sub]
    for fmt in ("json", "text", "markdown"):
        out[f"gate.{fmt}"] = [
            "gate", str(synth / "gated"), "--base", "HEAD", "--format", fmt, "--fail-on", "never"
        ]  # fmt: skip
    return out


#: The gate's acceptances: one in use, one expired, one no longer needed.
ACCEPTED = """
[[accepted]]
check = "points-misfit"
records = ["ardenite-l1"]
reason = "kept for the comparison"
by = "same_output.py"

[[accepted]]
check = "enthalpy-implausible"
records = ["bellorium-l1"]
reason = "expired on purpose"
by = "same_output.py"
until = 2000-01-01

[[accepted]]
check = "slope-not-positive"
records = ["rostane-s1"]
reason = "no such finding"
by = "same_output.py"
"""


def gated_table(folder: Path) -> None:
    """A copy of the demo in a new git repository, one record changed since its commit
    (ardenite's liquid read as log10) and acceptances in ``accepted.toml``.
    """
    shutil.copytree(DEMO, folder)
    git = ["git", "-c", "user.name=same_output", "-c", "user.email=same@output"]
    subprocess.run([*git, "init", "-q"], cwd=folder, check=True)
    subprocess.run([*git, "add", "-A"], cwd=folder, check=True)
    subprocess.run([*git, "commit", "-q", "-m", "base"], cwd=folder, check=True)
    metals = folder / "records" / "metals.csv"
    lines = metals.read_text().splitlines(keepends=True)
    k = next(i for i, line in enumerate(lines) if line.startswith("ardenite-l1,"))
    lines[k] = lines[k].replace(",three-term,e,Pa,", ",three-term,10,Pa,", 1)
    metals.write_text("".join(lines))
    (folder / "accepted.toml").write_text(ACCEPTED)


def render(tree: Path, cmds: dict[str, list[str]], cwd: Path) -> tuple[dict[str, bytes], list[str]]:
    """Run every command with the code in ``tree``; (outputs, failures). The commands run
    in ``cwd``, a folder without a package of that name: ``python -m`` puts its working
    folder first on the path, ahead of PYTHONPATH."""
    env = dict(os.environ, PYTHONPATH=str(tree))
    outputs, failures = {}, []
    for name, args in cmds.items():
        got = subprocess.run(
            [sys.executable, "-m", "vpaudit.cli", *args],
            cwd=cwd,
            env=env,
            capture_output=True,
        )
        # exit 1 means findings at or above --fail-on; 2 and 3 are usage and internal errors
        if got.returncode not in (0, 1):
            failures.append(f"{name}: exit {got.returncode}: {got.stderr.decode()[-300:]}")
        outputs[name] = got.stdout
    return outputs, failures


def main() -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("--base", default="HEAD", help="revision to compare the working tree with")
    args = ap.parse_args()
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from synth import generate

    with tempfile.TemporaryDirectory() as tmp:
        work = Path(tmp)
        generate(work / "synth" / "synth1", 3000, seed=1)
        generate(work / "synth" / "synth2", 2000, seed=2, antoine_share=0.3)
        gated_table(work / "synth" / "gated")
        base_tree = work / "base"
        subprocess.run(
            ["git", "worktree", "add", "--detach", "-q", str(base_tree), args.base],
            cwd=ROOT,
            check=True,
        )
        try:
            cmds = commands(work / "synth")
            before, failed_before = render(base_tree, cmds, work)
            after, failed_after = render(ROOT, cmds, work)
        finally:
            subprocess.run(
                ["git", "worktree", "remove", "--force", str(base_tree)], cwd=ROOT, check=False
            )
    failures = [f"base: {f}" for f in failed_before] + [f"now: {f}" for f in failed_after]
    differ = [name for name in cmds if before[name] != after[name]]
    if not any(DEMO.encode() in out for out in after.values()):
        failures.append("the outputs do not name the demo table: were they made at all?")
    for line in failures:
        print("FAILED", line)
    for name in differ:
        print("DIFFERS", name)
    if not failures and not differ:
        print(f"same output: {len(cmds)} outputs, {args.base} against the working tree")
    return 1 if failures or differ else 0


if __name__ == "__main__":
    sys.exit(main())
