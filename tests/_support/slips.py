"""A labelled set of transcription slips, made by corrupting clean real records.

Clean data (test-only, via ``chemicals``):

* the solid/liquid pairs of Alcock, Itkin & Horrigan (1984), Can. Metall. Q. 23, 309, with
  CRC Handbook melting points, enthalpies of fusion and normal boiling points;
* the Antoine constants of Poling, Prausnitz & O'Connell, The Properties of Gases and Liquids,
  5th ed. (log10 P[Pa], T in K), with CRC Handbook normal boiling points.

Each case is one substance (renamed ``<name>#<k>``) holding the clean records with one slip
applied to one of them, and the truth: which record, which kind, and the original record
(so a suggested fix can be checked by whether it reproduces the original curve). The kind
``other`` is a perturbation that no single slip explains (a source that disagrees by 15-60 %
in pressure, or a 1/T coefficient off by 3-15 %), and ``clean`` an unchanged pair: for both the
right answer is no suggestion.
"""

from __future__ import annotations

import math
import random
from dataclasses import dataclass, field
from decimal import Decimal

import numpy as np
from refdata import ALCOCK, CRC, POLING, alcock_pairs, table_from_rows

from vpaudit.equations.convert import convert_record
from vpaudit.equations.engine import curves_from_frame, evaluate
from vpaudit.units import PRESSURE_UNITS

SLIP_KINDS = (
    "log-base",
    "pressure-unit",
    "temperature-unit",
    "sign",
    "phase-swap",
    "decimal-shift",
    "coefficient-swap",
    "digit-transposition",
)


@dataclass
class Case:
    """One labelled case: records (one corrupted), references, and the truth."""

    substance: str
    kind: str  # a slip kind, "other" or "clean"
    record: str | None  # id of the corrupted record
    records: list[dict]
    references: list[dict]
    original: dict | None = None  # the corrupted record before the slip
    detail: str = ""
    partner_original: dict | None = field(default=None, repr=False)


def _text(v) -> str:
    return repr(float(v))


def _cells(rec: dict) -> dict:
    """A copy of ``rec`` with its coefficients as text, as a table holds them."""
    return {k: (_text(v) if k in "ABCDE" and v is not None else v) for k, v in rec.items()}


def _coeffs(rec: dict) -> list[str]:
    return [c for c in "ABCDE" if rec.get(c) is not None and float(rec[c]) != 0.0]


def corrupt(rec: dict, kind: str, rng: random.Random) -> tuple[dict, str] | None:
    """Apply one slip of ``kind`` to a copy of ``rec`` (number cells as text); None when the
    kind does not apply to the record.
    """
    r = _cells(rec)
    coeffs = _coeffs(rec)
    if kind == "log-base":
        other = "10" if rec["log_base"] == "e" else "e"
        conv = convert_record(rec, log_base=other)
        r.update({c: _text(conv[c]) for c in coeffs})
        return r, f"coefficients converted to base {other}, still marked {rec['log_base']}"
    if kind == "pressure-unit":
        u = rng.choice([u for u in PRESSURE_UNITS if u != rec["pressure_unit"]])
        return _pressure_slip(rec, r, u)
    if kind == "temperature-unit":
        if rec["form"] != "antoine":
            return None
        v = rng.choice(["degC", "degF"])
        return _temperature_slip(rec, r, v, with_range=rng.random() < 0.5)
    if kind == "sign":
        c = rng.choice(coeffs)
        r[c] = _text(-float(rec[c]))
        return r, f"sign of {c}"
    if kind == "decimal-shift":
        c = rng.choice(coeffs)
        k = rng.choice([-3, -2, -1, 1, 2, 3])
        r[c] = format(Decimal(_text(rec[c])).scaleb(k), "f")
        return r, f"{c} times 1e{k}"
    if kind == "coefficient-swap":
        if len(coeffs) < 2:
            return None
        a, b = rng.sample(coeffs, 2)
        r[a], r[b] = _text(rec[b]), _text(rec[a])
        return r, f"{a} and {b} swapped"
    if kind == "digit-transposition":
        c = rng.choice(coeffs)
        t = _text(rec[c])
        end = next((i for i, ch in enumerate(t) if ch in "eE"), len(t))
        spots = [i for i in range(end - 1) if t[i].isdigit() and t[i + 1].isdigit()]
        spots = [i for i in spots if t[i] != t[i + 1]]
        if not spots:
            return None
        i = rng.choice(spots)
        r[c] = t[:i] + t[i + 1] + t[i] + t[i + 2 :]
        return r, f"{c}: {t} -> {r[c]}"
    if kind == "other":
        if rng.random() < 0.5:
            f = math.exp(rng.choice([-1, 1]) * rng.uniform(0.14, 0.47))  # 15-60 % in P
            conv = dict(rec)
            ln_b = 1.0 if rec["log_base"] == "e" else math.log(10.0)
            r["A"] = _text(float(rec["A"]) + math.log(f) / ln_b)
            _ = conv
            return r, f"pressure times {f:.3f}"
        c = "B"
        r[c] = _text(float(rec[c]) * (1 + rng.choice([-1, 1]) * rng.uniform(0.03, 0.15)))
        return r, "B off by 3-15 %"
    raise ValueError(kind)


def _alcock_cases(rng: random.Random, per_kind: int | None) -> list[Case]:
    from chemicals import Tb

    records, refs = alcock_pairs()
    by_name: dict[str, list[dict]] = {}
    for r in records:
        by_name.setdefault(r["substance"], []).append(r)
    ref_by: dict[str, list[dict]] = {}
    for r in refs:
        ref_by.setdefault(r["substance"], []).append(r)
    cases: list[Case] = []
    names = sorted(by_name)
    tb: dict[str, float | None] = {}
    from chemicals.vapor_pressure import Psat_data_Alcock_elements as liq
    from chemicals.vapor_pressure import Psub_data_Alcock_elements as sol

    for cas in sol.index.intersection(liq.index):
        try:
            tb[str(sol.loc[cas, "Name"])] = Tb(cas, method="CRC_INORG")
        except Exception:
            tb[str(sol.loc[cas, "Name"])] = None
    k = 0
    for kind in (*SLIP_KINDS, "other", "clean"):
        if kind == "temperature-unit":
            continue
        chosen = names if per_kind is None else rng.sample(names, min(per_kind, len(names)))
        for name in chosen:
            pair = by_name[name]
            sub = f"{name}#{k}"
            k += 1
            recs = [dict(r, substance=sub, id=f"{r['id']}#{k}") for r in pair]
            rf = [dict(r, substance=sub) for r in ref_by.get(name, [])]
            if tb.get(name):
                rf.append(
                    {
                        "substance": sub,
                        "quantity": "normal_boiling_point",
                        "value": float(tb[name]),
                        "unit": "K",
                        "source": CRC,
                    }
                )
            if kind == "clean":
                cases.append(Case(sub, kind, None, recs, rf))
                continue
            if kind == "phase-swap":
                s, lq = recs
                s2, l2 = dict(s, phase="liquid"), dict(lq, phase="solid")
                cases.append(Case(sub, kind, s["id"], [s2, l2], rf, s, "labels swapped", lq))
                continue
            i = rng.randrange(2)
            got = corrupt(recs[i], kind, rng)
            if got is None:
                continue
            bad, detail = got
            out = list(recs)
            out[i] = bad
            cases.append(Case(sub, kind, recs[i]["id"], out, rf, recs[i], detail))
    return cases


def poling_record(a, record_id: str, substance: str) -> dict:
    """A liquid Antoine record from one row of Poling et al.'s table (via chemicals)."""
    return {
        "id": record_id,
        "substance": substance,
        "phase": "liquid",
        "form": "antoine",
        "log_base": "10",
        "pressure_unit": "Pa",
        "temperature_unit": "K",
        "A": float(a["A"]),
        "B": float(a["B"]),
        "C": float(a["C"]),
        "t_min": float(a["Tmin"]),
        "t_max": float(a["Tmax"]),
        "source": POLING,
        "uncertainty": 0.02,
    }


def _poling_cases(rng: random.Random, n: int, per_kind: int | None) -> list[Case]:
    from chemicals import Tb
    from chemicals.vapor_pressure import Psat_data_AntoinePoling as ant

    pool = []
    for cas in ant.index:
        try:
            tb = Tb(cas, method="CRC_ORG")
        except Exception:
            tb = None
        a = ant.loc[cas]
        if tb and a["Tmin"] < tb < a["Tmax"] and a["Tmin"] + a["C"] > 20:
            pool.append((cas, a, float(tb)))
        if len(pool) >= n:
            break
    cases: list[Case] = []
    k = 0
    for kind in (*[x for x in SLIP_KINDS if x != "phase-swap"], "other", "clean"):
        chosen = pool if per_kind is None else rng.sample(pool, min(per_kind, len(pool)))
        for cas, a, tb in chosen:
            sub = f"{cas}#{k}"
            k += 1
            rec = poling_record(a, f"{cas}-poling#{k}", sub)
            rf = [
                {
                    "substance": sub,
                    "quantity": "normal_boiling_point",
                    "value": tb,
                    "unit": "K",
                    "source": "CRC Handbook of Chemistry and Physics via chemicals",
                }
            ]
            if kind == "clean":
                cases.append(Case(sub, kind, None, [rec], rf))
                continue
            got = corrupt(rec, kind, rng)
            if got is None:
                continue
            bad, detail = got
            cases.append(Case(sub, kind, rec["id"], [bad], rf, rec, detail))
    return cases


def labelled_cases(
    seed: int = 20261202, per_kind: int | None = None, poling: int = 40
) -> list[Case]:
    """The labelled set: Alcock pairs with every kind but temperature-unit, Poling Antoine
    liquids with every kind but phase-swap; ``per_kind`` limits the substances per kind.
    """
    rng = random.Random(seed)
    return _alcock_cases(rng, per_kind) + _poling_cases(rng, poling, per_kind)


def cases_table(cases: list[Case]):
    """One table holding every case as its own substance."""
    recs = [r for c in cases for r in c.records]
    refs = [r for c in cases for r in c.references]
    return table_from_rows(recs, refs)


def _pressure_slip(rec: dict, r: dict, u: str) -> tuple[dict, str]:
    """``r`` (a copy of ``rec``) with coefficients for pressure unit ``u``, still marked as
    ``rec``'s unit."""
    conv = convert_record(rec, pressure_unit=u)
    if str(rec["form"]).startswith("wagner"):  # the unit lives in Pc
        r["p_crit"] = _text(conv["p_crit"])
        return r, f"Pc in {u}, marked {rec['pressure_unit']}"
    r.update({c: _text(conv[c]) for c in _coeffs(rec)})
    return r, f"coefficients for {u}, marked {rec['pressure_unit']}"


def _temperature_slip(rec: dict, r: dict, v: str, with_range: bool) -> tuple[dict, str]:
    """``r`` with Antoine constants for temperature scale ``v`` marked K; ``with_range``:
    the range came with the constants, in the same scale."""
    conv = convert_record(rec, temperature_unit=v)
    r.update({c: _text(conv[c]) for c in ("A", "B", "C")})
    if with_range:
        r["t_min"], r["t_max"] = conv["t_min"], conv["t_max"]
        return r, f"constants and range in {v}, marked K"
    return r, f"constants in {v}, range in K, marked K"


def unit_slips(rec: dict) -> list[tuple[str, dict, str]]:
    """Every metadata slip of ``rec``, not a random one: (kind, corrupted, what) for the log
    base, each other pressure unit (Torr only as mmHg: they differ by 1.4e-7) and, for an
    Antoine equation, degC and degF with the range in K or in the same scale."""
    out = [("log-base", *corrupt(rec, "log-base", random.Random(0)))]
    for u in PRESSURE_UNITS:
        if u not in (rec["pressure_unit"], "Torr"):
            out.append(("pressure-unit", *_pressure_slip(rec, _cells(rec), u)))
    if rec["form"] == "antoine":
        for v in ("degC", "degF"):
            for with_range in (True, False):
                out.append(
                    ("temperature-unit", *_temperature_slip(rec, _cells(rec), v, with_range))
                )
    return out


def reproduces(original: dict, corrupted: dict, suggestion: dict, tol: float = 1e-6) -> bool:
    """Whether applying ``suggestion`` to ``corrupted`` gives back the original curve (ln P
    within ``tol`` over the range), range and phase.
    """
    fixed = dict(corrupted)
    fixed.update(suggestion["corrected"])
    for c in "ABCDE":
        if fixed.get(c) is not None:
            fixed[c] = float(fixed[c])
    frame = table_from_rows([_plain(original), _plain(fixed)]).records
    cv = curves_from_frame(frame)
    if not np.allclose(cv.t_min[0], cv.t_min[1], rtol=1e-9) or not np.allclose(
        cv.t_max[0], cv.t_max[1], rtol=1e-9
    ):
        return False
    if original["phase"] != fixed["phase"]:
        return False
    t = np.linspace(cv.t_min[0], cv.t_max[0], 7)
    y = evaluate(cv, np.vstack([t, t]), 0)[0]
    return bool(np.all(np.abs(y[0] - y[1]) <= tol))


def _plain(rec: dict) -> dict:
    out = dict(rec)
    out["id"] = f"{out['id']}~{id(rec)}"
    return out


__all__ = [
    "ALCOCK",
    "Case",
    "SLIP_KINDS",
    "cases_table",
    "corrupt",
    "labelled_cases",
    "poling_record",
    "reproduces",
    "unit_slips",
]
