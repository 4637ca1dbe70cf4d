"""The benchmark and calibration scripts still run (smoke tests; nothing here is timed)."""

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_audit_scale_runs_and_vpaudit_agrees_with_the_baseline(tmp_path):
    proc = subprocess.run(
        [
            sys.executable,
            str(ROOT / "benchmarks" / "audit_scale.py"),
            "--sizes",
            "500",
            "--workdir",
            str(tmp_path),
            "--repeat",
            "1",
        ],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stderr
    (row,) = [line.split() for line in proc.stdout.splitlines() if line.split()[:1] == ["500"]]
    assert row[-2] == "yes"  # the agreement column
    assert "targets (measured by this run):" in proc.stdout


def test_calibration_report_runs():
    proc = subprocess.run(
        [sys.executable, str(ROOT / "benchmarks" / "calibrate.py")],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stderr
    assert "Alcock" in proc.stdout and "preset compilation" in proc.stdout
