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


def shared_slip_sentences(summary: dict) -> list[str]:
    """One sentence per slip that many records of one file and source share or that recurs
    there (``summary["shared_slips"]``, :mod:`vpaudit.diagnose.shared`), for the
    human-readable reports; none when there is none.
    """
    out = []
    for g in summary.get("shared_slips") or ():
        change = " and ".join(f"{f} {old} -> {new}" for f, (old, new) in g["change"].items())
        if g.get("range_rewritten"):
            old, new = g["change"]["temperature_unit"]
            change += f" (the constants only: the range, already in {old}, rewritten in {new})"
        written = " and ".join(f"{f} {old}" for f, (old, _) in g["change"].items())
        phase = g["phase"] or "unlabelled"
        source = f'source "{g["source"]}"' if g["source"] else "no source"
        tried = g.get("tried")
        head = (
            f"{'Shared' if g['whole_source'] else 'Recurring'} slip: the diagnosis gives "
            f"{g['substances']} substances the same fix of their {phase} record in "
            f"{g['file']} ({source}), {change}"
            f" ({g['confident']} of them at 0.8 or above; e.g. {', '.join(g['records'][:3])})."
        )
        if g["whole_source"]:
            tail = (
                f" Applied to every {phase} record there written with {written} "
                f"({g['same_metadata']} records; tried on {_tried(tried)}), it leaves errors "
                f"on {tried['with_errors_after']} of the {tried['with_errors']} substances "
                "that had them: the source's header "
                "was likely misread once for all of its records. Check how the source writes "
                "its equations before applying the fixes one by one."
            )
        else:
            tail = (
                f" Of the {g['same_metadata']} {phase} records there written with {written}, "
                f"{g['flagged']} draw errors or warnings"
                + (
                    f" (applied to all of them, the change would leave errors on "
                    f"{tried['with_errors_after']} of {_tried(tried)}, against "
                    f"{tried['with_errors']} as written)"
                    if tried
                    else ""
                )
                + ": a slip that recurs in the typing of this source, not one of its header."
            )
        out.append(head + tail)
    return out


def _tried(tried: dict) -> str:
    """The substances a shared change was tried on, in words."""
    n, of = tried["substances"], tried.get("of", tried["substances"])
    return f"all {n} of their substances" if n >= of else f"the first {n} of their {of} substances"
