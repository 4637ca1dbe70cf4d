"""The benchmark and calibration scripts still run (smoke tests; nothing here is timed)."""

import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _benchmark(script: str, *args: str) -> str:
    """Run ``benchmarks/<script>`` with ``args``; its standard output (it must succeed)."""
    proc = subprocess.run(
        [sys.executable, str(ROOT / "benchmarks" / script), *args],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stderr
    return proc.stdout


def test_audit_scale_runs_and_vpaudit_agrees_with_the_baseline(tmp_path):
    out = _benchmark(
        "audit_scale.py", "--sizes", "500", "--workdir", str(tmp_path), "--repeat", "1"
    )
    (row,) = [line.split() for line in out.splitlines() if line.split()[:1] == ["500"]]
    assert row[-2] == "yes"  # the agreement column
    assert "targets (measured by this run):" in out


def test_calibration_report_runs():
    out = _benchmark("calibrate.py")
    assert "Alcock" in out and "preset compilation" in out


def test_clean_errors_are_judged_against_independent_data():
    """benchmarks/compilation_accuracy.py --judge-clean: each clean record of a compilation
    (Perry's table 2-8 via chemicals) that draws an error is put in exactly one class, and
    the ones that meet another method's reference value are counted as false alarms."""
    import re

    lines = _benchmark("compilation_accuracy.py", "--judge-clean", "--only", "perry").splitlines()
    head = re.match(
        r"perry: (\d+) clean records with an error of (\d+); .* false alarms by "
        r"independent data (\d+)",
        lines[0],
    )
    assert head, lines[0]
    total, n, false = (int(x) for x in head.groups())
    counts = {line.split(None, 1)[1]: int(line.split()[0]) for line in lines[1:]}
    assert sum(counts.values()) == total and 0 < total < n
    assert false == sum(v for k, v in counts.items() if "false alarm" in k)
    # Perry's critical temperatures (CRC) that a range passes while another method's does not
    assert counts.get("another reference value is met (false alarm)", 0) >= 1


def test_slips_are_planted_in_substances_that_already_draw_an_error():
    """benchmarks/compilation_accuracy.py --troubled: Perry's six records that draw an error
    as the compilation carries them (via chemicals) each get one slip; each row of the
    table counts them and its columns add up (a second fix right is one of the suggestions
    for another record)."""
    out = _benchmark("compilation_accuracy.py", "--troubled", "--only", "perry").splitlines()
    (row,) = [line.split() for line in out if line.startswith("perry")]
    planted, silent, other, second, confident = (int(row[k]) for k in (1, 4, 5, 6, 7))
    assert planted == 6 and silent + other <= planted and confident <= planted
    assert second <= other


def test_overall_figures_weigh_the_clean_and_the_troubled_substances_by_their_share():
    """benchmarks/compilation_accuracy.py on Perry's table 2-8 (via chemicals): the figures
    as the compilation's substances come are the clean sample's and the troubled sample's
    (the same as ``--troubled`` measures) weighted by the substances of each kind."""
    import re

    out = _benchmark("compilation_accuracy.py", "--only", "perry", "--sample", "30")
    (row,) = [
        line.split() for line in out.splitlines() if line.startswith("perry ") and "|" in line
    ]
    clean_top1 = float(row[7].rstrip("%")) / 100
    got = re.search(
        r"\((\d+) of (\d+) already draw an error; .*top-1 right ([\d.]+)%.*\((?:troubled "
        r"stratum: )(\d+) planted\)",
        out,
    )
    troubled, subs, top1, planted = int(got[1]), int(got[2]), float(got[3]) / 100, int(got[4])
    assert troubled == planted == 6 and subs == 340
    alone = _benchmark("compilation_accuracy.py", "--troubled", "--only", "perry", "--sample", "30")
    (trow,) = [line.split() for line in alone.splitlines() if line.startswith("perry")]
    troubled_top1 = float(trow[3].rstrip("%")) / 100
    expected = (subs - troubled) / subs * clean_top1 + troubled / subs * troubled_top1
    # each figure is printed to 0.1 %: the weighted sum of two printed figures and the
    # printed total each carry up to 0.05 % of rounding
    assert abs(top1 - expected) < 0.0010001


def test_two_slips_are_planted_one_in_each_record_of_real_pairs():
    """benchmarks/compilation_accuracy.py --two-slips on the Alcock et al. (1984) metal
    pairs (via chemicals): a slip in each record of each clean pair; the columns add up, and
    no suggestion stated almost certain (both fixes weighed together) is wrong."""
    out = _benchmark("compilation_accuracy.py", "--two-slips", "--only", "alcock").splitlines()
    (row,) = [line.split() for line in out if line.startswith("alcock")]
    pairs, silent, confident = int(row[1]), int(row[4]), int(row[5])
    both, one = float(row[2].rstrip("%")), float(row[3].rstrip("%"))
    assert 20 <= pairs <= 31 and silent <= pairs and both + one <= 100.0
    assert confident > 0 and row[6] == "0.0%"


def test_replica_tables_copy_real_pairs_and_their_slips_are_flagged(tmp_path):
    """benchmarks/synth.py::replicas: copies of the Alcock, Itkin & Horrigan (1984) metal
    pairs (as chemicals carries them) with a constant shift keep each pair's verdicts, and
    every planted slip (log base on the liquid, mmHg for Pa or a lost sign of B on the
    solid) draws an error on its substance."""
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from synth import replicas

    from vpaudit import audit

    slips = replicas(tmp_path / "t", 300, slip_rate=0.2, seed=5)
    result = audit(tmp_path / "t", diagnose=False)
    errors = {f.substance for f in result.findings if f.severity.value == "error"}
    assert slips and set(slips) <= errors
    assert set(slips.values()) == {"log-base", "pressure-unit", "sign-B"}
    # the shift moves both curves of a pair together, so every clean copy of one metal
    # draws the same checks as the others (those the real pair draws)
    lines = (tmp_path / "t" / "records" / "records.csv").read_text().splitlines()
    names = {line.split(",")[1] for line in lines}
    checks: dict[str, set] = {n: set() for n in names - {"substance"} - set(slips)}
    for f in result.findings:
        if f.substance in checks:
            checks[f.substance].add(f.check)
    by_metal: dict[str, set] = {}
    for name, found in checks.items():
        by_metal.setdefault(name.split("-", 1)[1], set()).add(frozenset(found))
    assert len(by_metal) > 20 and all(len(v) == 1 for v in by_metal.values())


def test_the_lone_curve_ceiling_counts_one_unit_of_each_pair_no_data_tells_apart():
    """benchmarks/lone_curves.py: where bar and atm (1.3 % apart) are both planted in one
    curve, one of the two must get the other's name; units 6.9 to 10 times apart (kPa, psi,
    bar) and mbar against mmHg (33 %) are told apart by the standard data."""
    sys.path.insert(0, str(ROOT / "benchmarks"))
    from lone_curves import _planted_unit, _twins

    def case(curve: int, unit: str):
        return (f"x#{curve}.{unit}", "pressure-unit", f"coefficients for {unit}, marked Pa", {}, {})

    assert _planted_unit("coefficients for atm, marked Pa") == "atm"
    assert _twins([case(0, u) for u in ("kPa", "psi", "mbar", "mmHg", "MPa")]) == 0
    assert _twins([case(0, u) for u in ("bar", "atm", "kPa")] + [case(1, "bar")]) == 1
    both = [case(c, u) for c in range(3) for u in ("bar", "atm")]
    assert _twins(both) == 3
    assert _twins([("x#0.1", "log-base", "log10 read as ln", {}, {})]) == 0
