"""Run every check's case file: records that must trigger it, records that must not."""

import math
from pathlib import Path

import pytest
import yaml
from refdata import table_from_rows
from scipy.constants import R

from vpaudit.auditing import audit_table
from vpaudit.checks import REGISTRY

CASES = Path(__file__).parent / "cases"


def _make(spec: dict) -> dict:
    """Three-term coefficients (base e, Pa, K) of the constant-dCp Clausius-Clapeyron
    integral through (t0, lnp0) with enthalpy h0 there (Clausius-Clapeyron)."""
    t0, h0, cp, lnp0 = (float(spec[k]) for k in ("t0", "h0", "cp", "lnp0"))
    c = cp / R
    b = -(h0 - cp * t0) / R
    a = lnp0 - b / t0 - c * math.log(t0)
    return {"form": "three-term", "A": a, "B": b, "C": c}


def _records(case: dict, defaults: dict) -> list[dict]:
    out = []
    for rec in case.get("records", []):
        row = {"log_base": "e", "pressure_unit": "Pa", **defaults, **rec}
        if "make" in row:
            row.update(_make(row.pop("make")))
        out.append(row)
    return out


def _load():
    for path in sorted(CASES.glob("*.yaml")):
        spec = yaml.safe_load(path.read_text(encoding="utf-8"))
        for case in spec["cases"]:
            yield pytest.param(
                spec["check"], spec.get("defaults", {}), case, id=f"{spec['check']}: {case['name']}"
            )


@pytest.mark.parametrize("check, defaults, case", list(_load()))
def test_case(check, defaults, case):
    table = table_from_rows(
        _records(case, defaults), case.get("references", []), case.get("points", [])
    )
    result = audit_table(table, only=[check])
    hits = [f for f in result.findings if f.check == check]
    internal = [f for f in result.findings if f.check == "internal-error"]
    assert not internal, internal[0].message
    if case["expect"] == "fail":
        assert hits, f"{check} did not report: {case['name']}"
        for f in hits:
            assert f.message and f.evidence is not None
            if "severity" in case:  # a check's milder tier
                assert f.severity.value == case["severity"], (case["name"], f.message)
            if "says" in case:
                assert case["says"] in f.message, (case["name"], f.message)
            witness = REGISTRY[check].witness  # how far from its witness: a number
            if witness is not None and case.get("residual") == "none":
                # a curve with no value at its witness has no residual: null, said so
                assert f.evidence.get(witness) is None, (case["name"], f.evidence)
            elif witness is not None:
                size = f.evidence.get(witness)
                sizes = size if isinstance(size, list) else [size]
                assert sizes and all(isinstance(x, int | float) for x in sizes), (
                    case["name"],
                    witness,
                    f.evidence,
                )
    else:
        assert not hits, f"{check} reported on a passing case: {hits[0].message}"


def test_every_check_has_a_case_file_with_both_outcomes_and_a_docstring():
    for name, spec in REGISTRY.items():
        path = CASES / f"{name}.yaml"
        assert path.exists(), f"no case file for check {name!r}"
        expects = {c["expect"] for c in yaml.safe_load(path.read_text())["cases"]}
        assert expects == {"fail", "pass"}, f"{name}: needs failing and passing cases"
        assert spec.doc, f"check {name!r} has no docstring"
        assert spec.summary and spec.basis


def test_docs_checks_md_is_generated_from_the_registry():
    from vpaudit.docs import checks_markdown

    page = Path(__file__).resolve().parents[2] / "docs" / "checks.md"
    assert page.read_text(encoding="utf-8") == checks_markdown(), (
        "docs/checks.md is stale: vpaudit checks --format markdown > docs/checks.md"
    )


def test_a_policy_that_lowers_a_check_lowers_its_milder_tier_too():
    # the anchor's warning tier, boiling-point's note for a far Tb: a policy setting the
    # check to note must not see a warning from it
    from refdata import table_from_rows

    from vpaudit.auditing import audit_table
    from vpaudit.policy import Policy

    rec = {
        "id": "a",
        "substance": "s",
        "phase": "liquid",
        "form": "three-term",
        "log_base": "e",
        "pressure_unit": "Pa",
        "A": 36.2,
        "B": -6015.0,
        "C": -2.406,
        "t_min": 300.0,
        "t_max": 600.0,
        "source": "case",
    }
    ref = {
        "substance": "s",
        "quantity": "standard_enthalpy_of_vaporization",
        "value": 60.0,
        "unit": "kJ/mol",
        "at_temperature": 298.15,
        "source": "case",
    }
    table = table_from_rows([rec], [ref])
    default = audit_table(table, diagnose=False)
    tiers = {f.severity.value for f in default.findings if f.check == "anchor-enthalpy"}
    assert tiers == {"warning"}
    lowered = audit_table(
        table, Policy("evaluated", {"anchor-enthalpy": {"severity": "note"}}), diagnose=False
    )
    assert {f.severity.value for f in lowered.findings if f.check == "anchor-enthalpy"} == {"note"}


@pytest.mark.parametrize(
    ("policy", "expected"),
    [({}, "error"), ({"severity": "error"}, "error"), ({"severity": "note"}, "note")],
)
def test_a_policy_that_lowers_a_check_lowers_its_escalated_tier_too(policy, expected):
    # heat-capacity-sign is a warning that escalates to an error beyond error_above (60
    # J/(mol K)): the escalation stands while the policy keeps or raises the check, and a
    # policy setting it to note gets notes. The record: C = +12 (dCp = R C = +99.8 J/(mol
    # K), constant; P 17-916 Pa, dH about 40 kJ/mol), an invented case.
    from refdata import table_from_rows

    from vpaudit.auditing import audit_table
    from vpaudit.policy import Policy

    rec = {
        "id": "a", "substance": "s", "phase": "liquid", "form": "three-term", "log_base": "e",
        "pressure_unit": "Pa", "A": -63.55, "B": -611.0, "C": 12.0, "t_min": 300.0,
        "t_max": 400.0, "source": "case",
    }  # fmt: skip
    pol = Policy("evaluated", {"heat-capacity-sign": policy} if policy else {})
    found = audit_table(table_from_rows([rec], []), pol, diagnose=False).findings
    assert {f.severity.value for f in found if f.check == "heat-capacity-sign"} == {expected}


@pytest.mark.parametrize(
    ("policy", "weak", "strong"),
    [
        (None, "note", "error"),  # the declared tiers
        ("warning", "note", "error"),  # the check at its default
        ("error", "note", "error"),  # raised: a milder tier stays as declared
        ("note", "note", "note"),  # lowered: every tier is lowered, none left higher
    ],
)
def test_a_tier_takes_its_severity_from_the_policy_as_declared(policy, weak, strong):
    # a warning check with a milder (note) and a harsher (error) tier, made up here
    from vpaudit.checks._registry import CheckSpec, Scope, Severity

    spec = CheckSpec(
        "made-up",
        Severity.warning,
        Scope.record,
        "",
        "",
        {},
        lambda ctx: iter(()),
        tiers={"weak": Severity.note, "strong": Severity.error},
    )
    sev = None if policy is None else Severity(policy)
    assert spec.severity_under(sev) is (sev or Severity.warning)
    assert spec.severity_under(sev, "weak").value == weak
    assert spec.severity_under(sev, "strong").value == strong
    assert spec.escalates_to is Severity.error
    with pytest.raises(KeyError):  # a tier the check did not declare
        spec.severity_under(sev, "unknown")


def test_every_declared_tier_differs_from_its_checks_severity():
    from vpaudit.checks._registry import REGISTRY

    for spec in REGISTRY.values():
        for name, sev in spec.tiers.items():
            assert sev is not spec.severity, (spec.name, name)
