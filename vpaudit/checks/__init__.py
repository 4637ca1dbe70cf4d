"""The audit's checks: a registry, the finding type, and one module per family.

Importing this package registers every check, in reading order: per record (the curve over
its range, then what it implies), the boiling point, the critical point, the 298.15 K anchor,
per solid/liquid pair, across sources, provenance.
"""

from importlib import import_module

from ._registry import REGISTRY, CheckSpec, Scope, Severity, Threshold, check, get_check, ordered
from .finding import Finding

for _module in (
    "record",
    "implied",
    "boiling",
    "critical",
    "anchor",
    "pair",
    "triple",
    "sources",
    "provenance",
):
    import_module(f"{__name__}.{_module}")

__all__ = [
    "REGISTRY",
    "CheckSpec",
    "Finding",
    "Scope",
    "Severity",
    "Threshold",
    "check",
    "get_check",
    "ordered",
]
