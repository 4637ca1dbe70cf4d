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
        ],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stderr
    last = proc.stdout.strip().splitlines()[-1].split()
    assert last[0] == "500" and last[-2] == "yes"


def test_calibration_report_runs():
    proc = subprocess.run(
        [sys.executable, str(ROOT / "benchmarks" / "calibrate.py")],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stderr
    assert "Alcock" in proc.stdout and "preset compilation" in proc.stdout
