"""The one sentence every human-readable report gives on what the audit could not test."""

from __future__ import annotations

#: For each kind of missing data (``summary["not_checked"]``): what it leaves untested.
NOT_TESTED = {
    "no_partner_phase": ("the triple point and Hess's law", "no partner phase"),
    "no_melting_reference": ("the melting-point tests", "no melting or triple point reference"),
    "no_boiling_reference": ("the boiling-point test", "no normal boiling point reference"),
    "no_enthalpy_reference": (
        "the enthalpy comparison at a reference's own temperature",
        "no reference enthalpy of vaporization, sublimation or fusion",
    ),
    "no_standard_reference": (
        "the 298.15 K anchor",
        "no standard enthalpy or entropy of the phase change",
    ),
    "single_source": ("the comparison of sources", "one source per phase"),
    "no_points": ("the fit to measured points", "no measured points"),
}


def coverage_sentence(summary: dict) -> str:
    """``Not tested for want of data: ...`` from the summary's ``not_checked`` counts, or an
    empty string when everything could be tested.
    """
    missing = summary.get("not_checked") or {}
    parts = [
        f"{NOT_TESTED[key][0]} for {n} substance(s) ({NOT_TESTED[key][1]})"
        for key, n in missing.items()
        if key in NOT_TESTED
    ]
    return "Not tested for want of data: " + "; ".join(parts) + "." if parts else ""
