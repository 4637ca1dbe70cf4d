"""Standard reference rows for the 298.15 K anchor, built from ``chemicals.reaction``
(test-only). Each value is a difference of standard formation enthalpies or standard
entropies of the gas and the condensed phase at 298.15 K and 1 bar, through the documented
lookups ``Hfg``, ``Hfl``, ``Hfs``, ``S0g``, ``S0l``, ``S0s`` with ``method="CRC"`` (CRC
Handbook of Chemistry and Physics, standard thermodynamic properties of chemical
substances); no other method is used.
"""

from __future__ import annotations

import math

SOURCE = "CRC Handbook standard thermodynamic data via chemicals.reaction, method CRC"


def _get(fn, cas: str):
    try:
        v = fn(cas, method="CRC")
    except Exception:  # noqa: BLE001  (the table has no such value)
        return None
    return float(v) if v is not None and math.isfinite(float(v)) else None


def anchor_rows(cas: str, substance: str, phase: str) -> list[dict]:
    """The standard enthalpy and entropy of the phase change of ``phase`` (sublimation of
    the solid, vaporization of the liquid) at 298.15 K, where the CRC data give both ends.
    """
    from chemicals import reaction as rx

    hg, sg = _get(rx.Hfg, cas), _get(rx.S0g, cas)
    hc, sc = (
        (_get(rx.Hfs, cas), _get(rx.S0s, cas))
        if phase == "solid"
        else (_get(rx.Hfl, cas), _get(rx.S0l, cas))
    )
    what = "sublimation" if phase == "solid" else "vaporization"
    out = []
    if hg is not None and hc is not None:
        out.append(
            {
                "substance": substance,
                "quantity": f"standard_enthalpy_of_{what}",
                "value": hg - hc,
                "unit": "J/mol",
                "at_temperature": 298.15,
                "source": SOURCE,
            }
        )
    if sg is not None and sc is not None:
        out.append(
            {
                "substance": substance,
                "quantity": f"standard_entropy_of_{what}",
                "value": sg - sc,
                "unit": "J/(mol K)",
                "at_temperature": 298.15,
                "source": SOURCE,
            }
        )
    return out
