"""Schema layer: JSON Schemas in sync, and the column-wise path gives pydantic's verdict."""

from pathlib import Path

import pytest
from pydantic import ValidationError

import vpaudit
from vpaudit.readers.files import RawFrame
from vpaudit.readers.rules import Collector
from vpaudit.readers.table import frame_from_raw
from vpaudit.schema import CoefficientRecord, json_schemas

ROOT = Path(__file__).resolve().parents[1]


def test_json_schemas_are_generated_from_the_models():
    for name, text in json_schemas().items():
        path = ROOT / "schemas" / f"{name}.schema.json"
        assert path.read_text(encoding="utf-8") == text, (
            f"{path} is stale: regenerate with python -m vpaudit.schema"
        )


def test_public_api_is_explicit():
    assert sorted(vpaudit.__all__) == sorted(
        [
            "AuditResult",
            "Curves",
            "EquationError",
            "Finding",
            "FitError",
            "Policy",
            "PolicyError",
            "RecordRuleError",
            "Severity",
            "StoreError",
            "Table",
            "TableError",
            "TableErrors",
            "UnitError",
            "UnknownCheckError",
            "VpauditError",
            "WriteError",
            "__version__",
            "audit",
            "audit_table",
            "curves_from_frame",
            "enthalpy",
            "eval_substance",
            "heat_capacity_change",
            "ln_pressure",
            "load_policy",
            "load_table",
            "open_table",
        ]
    )
    for name in vpaudit.__all__:
        assert hasattr(vpaudit, name), name


GOOD = dict(
    id="g",
    substance="s",
    phase="liquid",
    form="three-term",
    log_base="e",
    pressure_unit="Pa",
    temperature_unit="K",
    A="30",
    B="-12000",
    C="-1.2",
    t_min="300",
    t_max="600",
    source="src",
)

# One row per rule (and some valid ones): the column-wise path and the pydantic model must
# reject exactly the same rows.
CASES = [
    {},
    {"form": "two-term", "C": None},
    {"form": "antoine", "A": "9.5", "B": "1500", "C": "-45"},
    {"form": "antoine", "A": "9.5", "B": "1500", "C": "-450"},  # pole at 450 K in range
    {
        "form": "antoine",
        "temperature_unit": "degC",
        "A": "8",
        "B": "1700",
        "C": "230",
        "t_min": "0",
        "t_max": "100",
    },
    {"t_min": "600", "t_max": "300"},
    {"t_min": "0"},
    {"t_min": "-5"},
    {"t_max": None},
    {"source": None},
    {"form": "two-term"},  # C given but unused
    {"form": "four-term-t"},  # D missing
    {"temperature_unit": "degC"},  # degC on a log-linear form
    {
        "form": "wagner-3-6",
        "A": "-7",
        "B": "1",
        "C": "-2",
        "D": "-1",
        "t_crit": "700",
        "p_crit": "4e6",
    },
    {"form": "wagner-3-6", "A": "-7", "B": "1", "C": "-2", "D": "-1"},  # no Tc, Pc
    {"phase": "gas"},
    {"pressure_unit": "psia"},
    {"uncertainty": "0"},
    {"uncertainty": "0.02"},
]


def _pydantic_ok(row: dict) -> bool:
    data = {k: v for k, v in row.items() if v is not None}
    for k in ("A", "B", "C", "D", "E", "t_crit", "p_crit", "t_min", "t_max", "uncertainty"):
        if k in data:
            data[k] = float(data[k])
    try:
        CoefficientRecord.model_validate(data)
        return True
    except ValidationError:
        return False


def test_column_wise_verdicts_equal_the_per_row_model():
    rows = [{**GOOD, **case, "id": f"r{i}"} for i, case in enumerate(CASES)]
    cols = list(GOOD) + ["D", "t_crit", "p_crit", "uncertainty"]
    cells = {c: [r.get(c) for r in rows] for c in cols}
    out = Collector()
    frame_from_raw(RawFrame("<cases>", cols, cells, list(range(2, len(rows) + 2))), "records", out)
    flagged = {e.location.line for e in out.errors} | {p["line"] for p in out.problems}
    column_ok = [i + 2 not in flagged for i in range(len(rows))]
    model_ok = [_pydantic_ok(r) for r in rows]
    assert column_ok == model_ok
    assert sum(model_ok) == 6  # the valid ones: 0, 1, 2, 4, 13, 18


def test_policy_model_rejects_unknown_keys():
    from vpaudit.errors import PolicyError
    from vpaudit.policy import _from_mapping

    with pytest.raises(PolicyError):
        _from_mapping({"preset": "evaluated", "colour": 1}, "x.toml")
    with pytest.raises(PolicyError, match="has no threshold 'tolerence'"):
        _from_mapping({"checks": {"melting-point-mismatch": {"tolerence": 0.1}}}, "x.toml")
    with pytest.raises(PolicyError, match="'no-such-check' is not a check of vpaudit"):
        _from_mapping({"checks": {"no-such-check": {"severity": "off"}}}, "x.toml")


@pytest.mark.parametrize("text", ["nan", "inf", "-inf", "-1", "-0.5"])
def test_policy_thresholds_that_would_switch_a_check_off_silently_are_refused(tmp_path, text):
    # TOML reads nan and inf as floats: a tolerance of nan once made every comparison false
    from vpaudit.errors import PolicyError
    from vpaudit.policy import load_policy

    path = tmp_path / "vpaudit.toml"
    path.write_text(f"[checks.melting-point-mismatch]\ntolerance = {text}\n")
    with pytest.raises(PolicyError, match="tolerance must be a finite number, 0 or more"):
        load_policy(path)


def test_the_audits_json_meets_its_schema_and_the_schema_is_closed(sample_db):
    """schemas/report.schema.json, checked by jsonschema (Draft 2020-12) on the demo's
    audit (invented data); a field the contract does not name fails it, so a report that
    grows a field must grow the contract too."""
    import json

    from report_schema import validate_report

    from vpaudit.auditing import audit_table
    from vpaudit.readers import load_table
    from vpaudit.report import RENDERERS

    report = json.loads(RENDERERS["json"](audit_table(load_table(sample_db))))
    validate_report(report)
    assert any(f["suggestion"] for f in report["findings"])
    for broken in (
        {**report, "extra": 1},
        {**report, "findings": [{**report["findings"][0], "colour": "red"}]},
        {**report, "findings": [{**report["findings"][0], "severity": "fatal"}]},
        {**report, "summary": {k: v for k, v in report["summary"].items() if k != "error"}},
    ):
        with pytest.raises(AssertionError):
            validate_report(broken)
