"""Text output of ``vpaudit eval`` and ``vpaudit show``."""

from __future__ import annotations

import math

import numpy as np

from ..checks._context import AuditContext
from ..checks.real_gas import MAX_VIRIAL_TERM
from ..constants import R
from ..units import pressure_factor
from ._fixes import Explained, Undecided, apply_command, same_fix


def _g(v, fmt="{:.4g}") -> str:
    return "-" if v is None or (isinstance(v, float) and not math.isfinite(v)) else fmt.format(v)


def _table(header: list[str], rows: list[list[str]]) -> list[str]:
    widths = [
        max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(header)
    ]
    fmt = "  ".join(f"{{:<{w}}}" for w in widths)
    return [fmt.format(*header), fmt.format(*("-" * w for w in widths))] + [
        fmt.format(*r) for r in rows
    ]


#: From this vapour pressure [Pa] up, ``eval`` says when it could not take the vapour as a
#: real gas: the ideal reading of R T^2 dlnP/dT overstates the enthalpy of vaporization by
#: 0.6-1.0 % at 10 kPa, 3.6-5.7 % at 101325 Pa and 19-40 % at 1 MPa (propane, n-hexane,
#: ethanol, benzene, toluene, argon; CoolProp's reference equations of state).
DENSE_VAPOUR_PA = 1e4


def render_eval(answer: dict, unit: str = "Pa") -> str:
    """The ``vpaudit eval`` answer for a terminal, pressures in ``unit``."""
    f = pressure_factor(unit)
    t, p = answer["temperature_K"], answer["pressure_Pa"]
    if t is not None:
        head = f"{answer['substance']} at {t:.6g} K ({t - 273.15:.6g} degC)"
        col = f"P [{unit}]"
    else:
        head = f"{answer['substance']} at {p / f:.6g} {unit}"
        col = "T [K]"
    rows = []
    real = any(r.get("vapour", "ideal-gas") != "ideal-gas" for r in answer["records"])
    for r in answer["records"]:
        value = (
            _g(r["pressure_Pa"] / f if r["pressure_Pa"] is not None else None)
            if t is not None
            else _g(r["temperature_K"], "{:.5g}")
        )
        rows.append(
            [
                r["id"],
                r["phase"],
                value,
                _g(r["enthalpy_J_per_mol"] / 1000 if r["enthalpy_J_per_mol"] else None),
                _g(r["heat_capacity_change_J_per_mol_K"], "{:.3g}"),
                f"{_g(r['range_K'][0], '{:.5g}')}..{_g(r['range_K'][1], '{:.5g}')}",
                "yes"
                if r["in_range"]
                else "NO (extrapolated)"
                if r["temperature_K"]
                else "not reached in range",
            ]
            + ([r["vapour"].replace("-", " ") if r["enthalpy_J_per_mol"] else "-"] if real else [])
        )
    lines = [head, ""] + _table(
        ["record", "phase", col, "dH [kJ/mol]", "dCp [J/(mol K)]", "range [K]", "in range"]
        + (["vapour"] if real else []),
        rows,
    )
    lines.append("")
    if t is None and any(r["temperature_K"] is None for r in answer["records"]):
        lines.append(
            "A record marked 'not reached in range' does not reach this pressure within its "
            "validity range; --extrapolate searches beyond it."
        )
    if answer["stable_phase"]:
        why = (
            "lower vapour pressure"
            if t is not None
            else "reaches this pressure at the higher temperature"
        )
        stable = answer["stable_phase"]
        if not any(r["in_range"] for r in answer["records"] if r["phase"] == stable):
            # no record of that phase holds here: the verdict rests on extrapolated curves
            why += f"; no {stable} record's range reaches here, so this rests on extrapolation"
        lines.append(f"Stable phase: {stable} ({why}).")
        if answer.get("stable_phase_contradicts_melting_point"):
            lines.append(_against_melting_point(answer, stable, t is not None))
    if answer["molar_mass_kg_per_mol"] and t is not None:
        fl = [r["evaporation_flux_kg_per_m2_s"] for r in answer["records"]]
        lines.append(
            "Maximum evaporation flux into vacuum (Hertz-Knudsen-Langmuir, alpha = 1, "
            f"M = {answer['molar_mass_kg_per_mol'] * 1000:.5g} g/mol): "
            + ", ".join(
                f"{r['id']} {_g(v, '{:.3g}')} kg/(m2 s)"
                for r, v in zip(answer["records"], fl, strict=True)
            )
        )
    lines.append(
        "dH and dCp are implied by each curve's slope (Clausius-Clapeyron): dH = R T^2 dlnP/dT"
        + (" x dZ." if real else ".")
    )
    if real:
        lines += [
            "dZ = Z_vapour - Z_condensed (the exact Clapeyron equation), from a second virial "
            "coefficient with the Tc and Pc of the references, else a Wagner record's own: "
            + ", ".join(
                f"{r['id']} {r['compressibility_change']:.3f}"
                for r in answer["records"]
                if r["vapour"] == "real-gas"
            )
            + ". dCp is read as for an ideal gas."
        ]
    lines += _vapour_notes(answer["records"])
    return "\n".join(lines) + "\n"


def _against_melting_point(answer: dict, stable: str, at_temperature: bool) -> str:
    """The sentence that says the stable phase the curves give contradicts the reference
    melting point (``vpaudit eval``).
    """
    tm = answer["melting_point_K"]
    other = "liquid" if stable == "solid" else "solid"
    if at_temperature:
        where = f"at {answer['temperature_K']:.6g} K"
    else:
        from statistics import median  # of the stable phase's records, as eval weighs them

        at = [r["temperature_K"] for r in answer["records"] if r["phase"] == stable]
        t = median(v for v in at if v is not None)
        where = f"at {t:.6g} K, where the {stable} reaches this pressure,"
    return (
        f"This contradicts the reference melting point, {tm:.6g} K: {where} the {other} is "
        f"the stable phase. The {stable} and {other} curves disagree with that reference; "
        "'vpaudit audit' says where."
    )


def _vapour_notes(records: list[dict]) -> list[str]:
    """What ``eval`` could not take as a real gas, and why, where it matters: above the
    critical temperature and where the curve falls, always; near the critical point, where
    no saturated vapour is, or without a Tc and a Pc in the table, from
    :data:`DENSE_VAPOUR_PA` up. The ideal reading's excess near Tc is CoolProp's (propane,
    n-hexane, ethanol, benzene, toluene, argon at 0.95 Tc).
    """
    said: dict[str, list[str]] = {}
    for r in records:
        why = r.get("ideal_gas_because")
        if why is None or (
            why not in ("above-critical-temperature", "curve-falls")
            and (not r["enthalpy_J_per_mol"] or (r["pressure_Pa"] or 0.0) < DENSE_VAPOUR_PA)
        ):
            continue
        tc = r.get("critical_temperature_K")
        said.setdefault(why, []).append(
            f"{r['id']} (T/Tc = {r['temperature_K'] / tc:.3f})" if tc else r["id"]
        )
    words = {
        "above-critical-temperature": "above the critical temperature, where there is "
        "no liquid and no vapour pressure: a value the curve gives there is an extrapolation "
        "of no meaning.",
        "curve-falls": "the curve falls as T rises here, as no vapour-pressure "
        "curve does (its dH is negative).",
        "near-critical-point": f"too near Tc for a second virial coefficient (|B P/(R "
        f"T)| above {MAX_VIRIAL_TERM}), so dH is read as for an ideal gas, which overstates "
        "it there about twofold or more (by 84-136 % at 0.95 Tc for organic liquids and "
        "argon).",
        "no-saturated-vapour": "no saturated vapour is like this so far below Tc (too "
        f"dense for its temperature, |B P/(R T)| above {MAX_VIRIAL_TERM}, or a curve whose "
        "acentric factor no real substance has): a wrong pressure unit? dH is read as for an "
        "ideal gas.",
        "no-critical-constants": "no Tc and Pc in the table, so dH is read as for an "
        "ideal gas, which overstates it where the vapour is dense (for organic liquids by "
        "about 1 % at 10 kPa, 4-6 % at 1 atm, 19-40 % at 1 MPa); critical_temperature and "
        "critical_pressure references correct it.",
    }
    return [f"{', '.join(ids)}: {words[why]}" for why, ids in said.items()]


def _anchor_lines(ctx) -> list[str]:
    """Each record against the 298.15 K standard data of its phase change, when given."""
    from ..checks.anchor import anchor_values

    a = anchor_values(ctx)
    if a is None:
        return []
    rows = []
    for k, i in enumerate(a.rows.tolist()):
        rows.append(
            [
                ctx.id(i),
                f"{a.h[k] / 1e3:.4g}",
                f"{a.h_ref[k] / 1e3:.4g}" if np.isfinite(a.h_ref[k]) else "-",
                f"{a.s[k]:.4g}",
                f"{a.s_ref[k]:.4g}" if np.isfinite(a.s_ref[k]) else "-",
                f"{a.edge[k]:.5g}",
            ]
        )
    real = a.real_gas.any()
    return [
        "",
        "Anchor at 298.15 K (each curve extrapolated with its own dCp; the standard data):",
        *_table(
            ["record", "dH [kJ/mol]", "standard", "dS0 [J/(mol K)]", "standard", "from [K]"]
            + (["vapour"] if real else []),
            [
                r + ([_vapour(g, e)] if real else [])
                for r, g, e in zip(rows, a.real_gas.tolist(), a.estimated.tolist(), strict=True)
            ],
        ),
        *(
            [
                "vapour: real gas = its dZ and its step to the ideal gas at 1 bar from a second "
                "virial coefficient, with the Tc and Pc of the references (else a Wagner "
                "record's own; estimated = from the curve's own boiling point and slope); "
                "ideal = read as an ideal gas (ideal to 0.1 % there, no Tc and Pc to be had, or "
                "a curve no saturated vapour follows)."
            ]
            if real
            else []
        ),
    ]


def _vapour(real: bool, estimated: bool) -> str:
    """How the anchor took a curve's vapour (:func:`_anchor_lines`)."""
    if not real:
        return "ideal"
    return "real gas, estimated" if estimated else "real gas"


def _clip(text: str, width: int) -> str:
    """``text`` cut to ``width`` characters, with an ellipsis when it was cut."""
    return text if len(text) <= width else text[: width - 1] + "…"


def render_show(table, substance: str, result, trials: list[dict] = ()) -> str:
    """Everything about one substance for a terminal, its findings with their suggested
    fixes and the command that applies each, and each fix of metadata as tried on its
    record's whole source (``trials``, :func:`vpaudit.diagnose.shared.tried_on_source`).
    """
    from ..policy import load_policy
    from ..substance import substance_table

    sub = substance_table(table, substance)
    rec = sub.records
    lines = [f"{substance}: {len(rec)} record(s)", ""]
    rows = [
        [
            r.id,
            r.phase,
            r.form,
            f"log{r.log_base} {r.pressure_unit} {r.temperature_unit}",
            f"{r.t_min:g}..{r.t_max:g}",
            _clip(str(r.source or "-"), 60),
            f"{r.file}:{r.line}",
        ]
        for r in rec.itertuples()
    ]
    lines += _table(["record", "phase", "form", "convention", "range", "source", "where"], rows)
    lines += ["", "Coefficients (as written in the table):"]
    coef_cols = ["A", "B", "C", "D", "E", "t_crit", "p_crit"]
    used = [c for c in coef_cols if rec[c + "_text"].notna().any()]
    lines += _table(
        ["record", "form", *used],
        [
            [
                r["id"],
                r["form"],
                *[r[c + "_text"] if isinstance(r[c + "_text"], str) else "" for c in used],
            ]
            for _, r in rec.iterrows()
        ],
    )
    long = [(r.id, r.source) for r in rec.itertuples() if len(str(r.source or "")) > 60]
    if long:
        lines += ["", "Sources cut short above, in full:"]
        lines += [f"  {rid}: {src}" for rid, src in long]
    ref = sub.references
    if len(ref):
        lines += ["", "References:"]
        lines += [
            f"  {r.quantity} = {r.value_text} {r.unit} ({r.source})" for r in ref.itertuples()
        ]
    ctx = AuditContext(sub, load_policy(table.policy_path))
    pr = ctx.pairs
    if len(pr.solid):
        lines += ["", "Solid/liquid pairs (implied at the crossing):"]
        prow = []
        for k in range(len(pr.solid)):
            t = pr.t_cross[k]
            s, lq = pr.solid[k], pr.liquid[k]
            if np.isfinite(t):
                from ..equations.engine import enthalpy

                hs = float(enthalpy(ctx.curves.take([s]), t)[0])
                hl = float(enthalpy(ctx.curves.take([lq]), t)[0])
                prow.append(
                    [
                        f"{ctx.id(s)} / {ctx.id(lq)}",
                        f"{t:.5g}",
                        f"{math.exp(pr.y_cross[k]):.4g}",
                        f"{hs / 1e3:.4g}",
                        f"{hl / 1e3:.4g}",
                        f"{R * t * t * pr.slope_diff[k] / 1e3:.4g}",
                    ]
                )
            else:
                prow.append([f"{ctx.id(s)} / {ctx.id(lq)}", "no crossing", "-", "-", "-", "-"])
        lines += _table(
            ["pair", "T [K]", "P [Pa]", "dH_sub [kJ/mol]", "dH_vap [kJ/mol]", "dH_fus [kJ/mol]"],
            prow,
        )
    lines += _anchor_lines(ctx)
    if trials:  # before the fixes, as review says it: check the source first
        from ._shared import source_trial_sentences

        lines += ["", "The source as a whole:"]
        lines += [f"  {sentence}" for sentence in source_trial_sentences(trials)]
    lines += ["", f"Findings: {len(result.findings)}"]
    explained = Explained()  # each fix is explained once, as in the audit's text report
    undecided = Undecided(result.summary)
    for f in result.findings:
        lines.append(f"  {f.severity.label:<8}{f.check} ({', '.join(f.records)}): {f.message}")
        lead = undecided.sentence(f)
        if lead:
            lines.append(f"    diagnosis: {lead}")
        if f.suggestion:
            if not explained.first(f.suggestion):
                lines.append(f"    suggestion: {same_fix(f.suggestion)}")
                continue
            lines.append(f"    suggestion: {f.suggestion.get('explanation', '')}")
            lines.append(f"    to apply it: {apply_command(result.table_path, f.spec)}")
    lines.append("")
    return "\n".join(lines) + "\n"
