"""The check registry: each check declares its name, severity, scope and thresholds.

Metadata is declared in plain sight with :func:`check`; nothing is derived from class or
function names. A duplicate name fails at import time.
"""

from __future__ import annotations

import inspect
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field
from enum import StrEnum

from ..errors import UnknownCheckError

__all__ = [
    "Severity",
    "Scope",
    "Threshold",
    "CheckSpec",
    "REGISTRY",
    "check",
    "get_check",
    "ordered",
]


class Severity(StrEnum):
    """How serious a finding is; each carries its SARIF 2.1.0 ``level``."""

    error = "error"
    warning = "warning"
    note = "note"

    @property
    def sarif_level(self) -> str:
        """The SARIF ``result.level`` of this severity."""
        return self.value

    @property
    def label(self) -> str:
        """How every human-readable report spells it: ERROR, WARNING, NOTE."""
        return self.value.upper()

    @property
    def rank(self) -> int:
        """2 for error, 1 for warning, 0 for note (for sorting and ``--fail-on``)."""
        return _RANK[str(self)]


_RANK = {"error": 2, "warning": 1, "note": 0}


class Scope(StrEnum):
    """What one evaluation of a check looks at."""

    record = "record"
    pair = "pair"
    sources = "sources"


@dataclass(frozen=True)
class Threshold:
    """A tunable number of a check, with its documented default.

    Attributes
    ----------
    name : str
        Key in ``vpaudit.toml`` under ``[checks.<check>]``.
    default : float
        Value of the default (strict) preset.
    unit : str
        Unit of the value.
    description : str
        What the number bounds.
    """

    name: str
    default: float
    unit: str
    description: str


@dataclass(frozen=True)
class CheckSpec:
    """A registered check."""

    name: str
    severity: Severity
    scope: Scope
    summary: str
    basis: str
    thresholds: dict[str, Threshold]
    func: Callable[..., Iterator]
    doc: str = field(default="", compare=False)
    tiers: dict[str, Severity] = field(default_factory=dict)
    witness: str | None = None
    impossible: bool = False
    reads_pairs: bool = False

    @property
    def needs_pairs(self) -> bool:
        """Whether it reads the solid/liquid pairs: a pair check, or one that says so. The
        runner runs such checks once the pairs are made (:func:`vpaudit.auditing.run_checks`).
        """
        return self.scope is Scope.pair or self.reads_pairs

    @property
    def escalates_to(self) -> Severity | None:
        """The severity of its harsher tier, if it declares one (for the check list)."""
        top = [s for s in self.tiers.values() if s.rank > self.severity.rank]
        return max(top, key=lambda s: s.rank) if top else None

    def severity_under(self, policy: Severity | None, tier: str | None = None) -> Severity:
        """The severity of a finding of this check in ``tier`` (None: the check's own)
        when the policy gives the check ``policy`` (None: its default).

        A milder tier never rises above the policy's severity; a harsher tier applies while
        the policy keeps the check at its default or raises it, and a policy that lowers
        the check lowers every tier. Raises KeyError for a tier the check did not declare.
        """
        sev = policy or self.severity
        if tier is None:
            return sev
        level = self.tiers[tier]
        if level.rank <= self.severity.rank:  # a milder tier
            return sev if sev.rank <= level.rank else level
        if sev.rank < self.severity.rank:  # a harsher tier of a lowered check
            return sev
        return level if level.rank > sev.rank else sev


REGISTRY: dict[str, CheckSpec] = {}


def check(
    name: str,
    severity: Severity,
    scope: Scope,
    summary: str,
    basis: str,
    thresholds: tuple[Threshold, ...] = (),
    tiers: dict[str, Severity] | None = None,
    witness: str | None = None,
    impossible: bool = False,
    reads_pairs: bool = False,
):
    """Register a check under ``name``: a generator ``func(ctx, th)`` of hits
    (:mod:`vpaudit.checks.hits`) over the audit's arrays ``ctx`` and its own thresholds
    ``th`` under the policy.

    Parameters
    ----------
    name : str
        The permanent name of the check (used in policy files, findings and SARIF rules).
    severity : Severity
        Default severity of its findings.
    scope : Scope
        Whether it looks at records, solid/liquid pairs or groups of sources.
    summary : str
        One line saying what it tests.
    basis : str
        The published rule, law or source behind it.
    thresholds : tuple of Threshold
        Its tunable numbers and their defaults.
    tiers : dict, optional
        Named severities other than ``severity`` that some of its findings take (a
        warning where the evidence is weaker, an error beyond ``error_above``); a check
        names the tier of what it found, and the runner gives the severity, the policy
        applied (:meth:`CheckSpec.severity_under`).
    witness : str, optional
        For a check that compares a record with an independent witness (another source, a
        reference value, measured points, the partner phase): the evidence key of how far
        the record stands from it, in the unit the key names (a list of values: the
        largest counts). The diagnosis holds a fix that moves its record farther from a
        witness (:mod:`vpaudit.diagnose.scoring`).
    impossible : bool
        For a check whose error says the curve itself is physically impossible (a pressure
        that cannot be represented or that no real curve comes down to, a slope that is not
        positive or flatter than any real curve), which clean real equations all but never
        draw: the diagnosis weighs such an error left unexplained more heavily than others
        (``impossible_cost`` of :data:`vpaudit.diagnose.CALIBRATION`).
    reads_pairs : bool
        For a check of records or sources that also reads the solid/liquid pairs
        (``ctx.pairs``): the runner then runs it with the pair checks, once the pairs are
        made (they may be being made on another thread until then).
    """

    def register(func):
        if name in REGISTRY:
            raise ValueError(f"check {name!r} is registered twice")
        REGISTRY[name] = CheckSpec(
            name,
            severity,
            scope,
            summary,
            basis,
            {t.name: t for t in thresholds},
            func,
            inspect.cleandoc(func.__doc__ or ""),  # no source indentation in reports
            dict(tiers or {}),
            witness,
            impossible,
            reads_pairs,
        )
        return func

    return register


def get_check(name: str) -> CheckSpec:
    """Return the registered check ``name``; an unknown name lists the valid ones."""
    try:
        return REGISTRY[name]
    except KeyError:
        import difflib

        close = difflib.get_close_matches(name, sorted(REGISTRY), n=3)
        hint = (
            f"did you mean {', '.join(close)}? ('vpaudit checks' lists every check)"
            if close
            else f"the checks are {', '.join(sorted(REGISTRY))}"
        )
        raise UnknownCheckError(f"{name!r} is not a check of vpaudit; {hint}") from None


def ordered() -> list[CheckSpec]:
    """Registered checks in registration (reading) order."""
    return list(REGISTRY.values())
