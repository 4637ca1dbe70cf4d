"""Audit policy: named presets and per-check overrides from ``vpaudit.toml``.

A policy file looks like::

    preset = "evaluated"            # or "compilation"

    [checks.melting-point-mismatch]
    tolerance = 0.08                # any threshold the check declares
    severity = "warning"            # or "error", "note", "off"

Two presets of our own naming exist. ``evaluated`` (the default) is calibrated on critically
evaluated data (the metals of Alcock, Itkin and Horrigan, 1984; fits to the IAPWS releases)
and is strict: a steward runs the audit to find problems. ``compilation`` widens the
tolerances for large literature compilations of Antoine constants, whose sources agree with
each other far less well. The calibration behind both is in ``docs/calibration.md``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from .checks._registry import REGISTRY, Severity, get_check
from .errors import PolicyError, UnknownCheckError

__all__ = ["PRESETS", "Policy", "load_policy"]

#: Threshold overrides per preset (the ``evaluated`` preset is the declared defaults).
PRESETS: dict[str, dict[str, dict[str, float]]] = {
    "evaluated": {},
    "compilation": {
        "melting-point-mismatch": {"tolerance": 0.25},
        "fusion-enthalpy-mismatch": {"tolerance": 0.10},
        "boiling-point-mismatch": {"tolerance": 0.10},
        "enthalpy-mismatch": {"tolerance": 0.12},
        "sources-disagree": {"factor": 3.0},
        "heat-capacity-sign": {"tolerance": 25.0, "error_above": 80.0},
        "heat-capacity-magnitude": {"limit": 400.0},
        "points-misfit": {"factor": 4.0},
        "crossing-outside-range": {"max_extrapolation": 0.10},
        "range-gap": {"max_gap": 0.10},
    },
}


@dataclass
class Policy:
    """Resolved thresholds and severities for every check."""

    preset: str = "evaluated"
    overrides: dict[str, dict[str, Any]] = field(default_factory=dict)
    origin: str = "built-in defaults"

    def __post_init__(self) -> None:
        if self.preset not in PRESETS:
            raise PolicyError(
                f"unknown policy preset {self.preset!r}; valid presets: {', '.join(PRESETS)}"
            )
        for name, settings in self.overrides.items():
            try:
                spec = get_check(name)
            except UnknownCheckError as exc:
                raise PolicyError(f"{self.origin}: {exc}") from None
            for key, value in settings.items():
                if key == "severity":
                    if value not in ("error", "warning", "note", "off"):
                        raise PolicyError(
                            f"{self.origin}: [checks.{name}] severity must be "
                            f"error, warning, note or off, not {value!r}"
                        )
                    continue
                if key not in spec.thresholds:
                    valid = ", ".join(spec.thresholds) or "none"
                    raise PolicyError(
                        f"{self.origin}: check {name!r} has no threshold {key!r}"
                        f" (its thresholds: {valid}; or severity)"
                    )
                if isinstance(value, bool) or not isinstance(value, int | float):
                    raise PolicyError(f"{self.origin}: [checks.{name}] {key} must be a number")
                if not (math.isfinite(value) and value >= 0):  # every threshold is a size
                    raise PolicyError(
                        f"{self.origin}: [checks.{name}] {key} must be a finite number, 0 or "
                        f"more, not {value!r} ({spec.thresholds[key].description})"
                    )

    def threshold(self, check: str, name: str) -> float:
        """The value of threshold ``name`` of ``check`` under this policy."""
        spec = REGISTRY[check]
        if name in self.overrides.get(check, {}):
            return float(self.overrides[check][name])
        preset = PRESETS[self.preset].get(check, {})
        if name in preset:
            return float(preset[name])
        return spec.thresholds[name].default

    def thresholds(self, check: str) -> dict[str, float]:
        """All thresholds of ``check`` under this policy."""
        return {n: self.threshold(check, n) for n in REGISTRY[check].thresholds}

    def severity(self, check: str) -> Severity | None:
        """The severity of ``check``'s findings, or None when the policy turns it off."""
        value = self.overrides.get(check, {}).get("severity")
        if value == "off":
            return None
        return Severity(value) if value else REGISTRY[check].severity

    def describe(self) -> dict[str, Any]:
        """A JSON-able description (stored with each audit run)."""
        return {
            "preset": self.preset,
            "origin": self.origin,
            "overrides": self.overrides,
            "label": f"preset {self.preset}"
            + (
                f" with overrides from {self.origin}"
                if self.overrides
                else f", from {self.origin}"
                if self.origin.endswith(".toml")
                else ""
            ),
        }


def _from_mapping(data: dict, origin: str) -> Policy:
    from pydantic import ValidationError  # imported only when a policy file is read

    from .schema import PolicyFile

    try:
        model = PolicyFile.model_validate(data)
    except ValidationError as exc:
        raise PolicyError(
            f"{origin}: {exc.errors()[0]['msg']} at {'.'.join(map(str, exc.errors()[0]['loc']))}"
        ) from None
    overrides = {name: o.model_dump(exclude_none=True) for name, o in model.checks.items()}
    return Policy(model.preset, overrides, origin)


def load_policy(table_policy: Path | None = None, option: str | None = None) -> Policy:
    """Resolve the policy for an audit.

    Parameters
    ----------
    table_policy : Path, optional
        The table's own ``vpaudit.toml``.
    option : str, optional
        The ``--policy`` option: a preset name or a policy file; it replaces the table's.
    """
    from .readers.table import read_policy_file

    if option:
        if option in PRESETS:
            return Policy(option, {}, f"preset {option}")
        path = Path(option)
        if not path.is_file():
            raise PolicyError(
                f"--policy {option!r} is neither a preset ({', '.join(PRESETS)}) nor a policy file"
            )
        return _from_mapping(read_policy_file(path), str(path))
    if table_policy is not None:
        return _from_mapping(read_policy_file(table_policy), str(table_policy))
    return Policy()
