"""The sentences the human-readable reports give on a slip that many records of one source
share or that recurs there, and ``vpaudit show`` on a fix tried on its record's whole source
(:mod:`vpaudit.diagnose.shared`).
"""

from __future__ import annotations


def shared_slip_sentences(summary: dict) -> list[str]:
    """One sentence per slip that many records of one file and source share or that recurs
    there (``summary["shared_slips"]``, :mod:`vpaudit.diagnose.shared`), for the
    human-readable reports; none when there is none.
    """
    out = []
    for g in summary.get("shared_slips") or ():
        change, written, phase, source = _words(g)
        others = [
            " and ".join(f"{f} {old} -> {new}" for f, (old, new) in o["change"].items())
            + f", given to {o['substances']}"
            for o in g.get("or") or ()
        ]
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
                "that had them"
                + "".join(f"; so does {o}" for o in others)
                + (": no evidence tells them apart" if others else "")
                + f". {_HEADER}"
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


def source_trial_sentences(trials: list[dict]) -> list[str]:
    """One sentence per suggested change of metadata tried on its record's whole source
    (:func:`vpaudit.diagnose.shared.tried_on_source`), for ``vpaudit show``: a shared slip
    where it clears the source, else a slip of the record alone.
    """
    out = []
    for g in trials:
        change, written, phase, source = _words(g)
        tried = g["tried"]
        trial = (
            f"fix of {g['record']} ({change}), applied to every {phase} record in "
            f"{g['file']} ({source}) written with {written} ({g['same_metadata']} records; "
            f"tried on {_tried(tried)}),"
        )
        if g["whole_source"]:
            out.append(
                f"Shared slip: the {trial} leaves errors on {tried['with_errors_after']} of the "
                f"{tried['with_errors']} substances that had them. {_HEADER}"
            )
        else:
            out.append(
                f"The {trial} would leave {tried['with_errors_after']} of those "
                f"{tried['substances']} substances with errors, against "
                f"{tried['with_errors']} as written: a slip of this record, not of the "
                "source's header."
            )
    return out


#: What a shared slip asks of the reviewer.
_HEADER = (
    "The source's header was likely misread once for all of its records: check how the "
    "source writes its equations before applying the fixes one by one."
)


def _words(g: dict) -> tuple[str, str, str, str]:
    """A shared change (:mod:`vpaudit.diagnose.shared`) in words: the change (with the range
    rewritten where it is), the metadata it corrects as written, the phase and the source.
    """
    change = " and ".join(f"{f} {old} -> {new}" for f, (old, new) in g["change"].items())
    if g.get("range_rewritten"):
        old, new = g["change"]["temperature_unit"]
        change += f" (the constants only: the range, already in {old}, rewritten in {new})"
    written = " and ".join(f"{f} {old}" for f, (old, _) in g["change"].items())
    phase = g["phase"] or "unlabelled"
    source = f'source "{g["source"]}"' if g["source"] else "no source"
    return change, written, phase, source


def _tried(tried: dict) -> str:
    """The substances a shared change was tried on, in words."""
    n, of = tried["substances"], tried.get("of", tried["substances"])
    return f"their {n} substances" if n >= of else f"the first {n} of their {of} substances"
