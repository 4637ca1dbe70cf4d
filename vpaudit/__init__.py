"""vpaudit: audit tables of vapour-pressure equation coefficients.

The public API; the CLI only wraps these. Typical use::

    import vpaudit
    result = vpaudit.audit("sample_db")          # a table directory, file or .duckdb store
    for finding in result.findings:
        print(finding.severity, finding.check, finding.message)

The names below are imported on first use (PEP 562), so that importing the package, or
starting the command line, does not import pandas and the checks before they are needed:
``vpaudit audit`` reads the table's files meanwhile
(:func:`vpaudit.readers.files.read_ahead`).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ._lazy import lazy_names
from .errors import (
    EquationError,
    FitError,
    PolicyError,
    RecordRuleError,
    StoreError,
    TableError,
    TableErrors,
    UnitError,
    UnknownCheckError,
    VpauditError,
    WriteError,
)

__version__ = "0.1.0"

#: Where each public name is defined, for :func:`__getattr__`.
_HOME = {
    "open_table": ".api",
    "AuditResult": ".auditing",
    "audit": ".auditing",
    "audit_table": ".auditing",
    "Finding": ".checks",
    "Severity": ".checks",
    "Curves": ".equations",
    "curves_from_frame": ".equations",
    "enthalpy": ".equations",
    "heat_capacity_change": ".equations",
    "ln_pressure": ".equations",
    "eval_substance": ".substance",
    "Policy": ".policy",
    "load_policy": ".policy",
    "Table": ".readers",
    "load_table": ".readers",
}

if TYPE_CHECKING:
    from .api import open_table
    from .auditing import AuditResult, audit, audit_table
    from .checks import Finding, Severity
    from .equations import Curves, curves_from_frame, enthalpy, heat_capacity_change, ln_pressure
    from .policy import Policy, load_policy
    from .readers import Table, load_table
    from .substance import eval_substance


__getattr__, __dir__ = lazy_names(__name__, globals(), _HOME)

__all__ = [
    "AuditResult",
    "Curves",
    "EquationError",
    "FitError",
    "Finding",
    "Policy",
    "PolicyError",
    "RecordRuleError",
    "Severity",
    "StoreError",
    "Table",
    "TableError",
    "TableErrors",
    "UnitError",
    "UnknownCheckError",
    "VpauditError",
    "WriteError",
    "__version__",
    "audit",
    "audit_table",
    "curves_from_frame",
    "enthalpy",
    "eval_substance",
    "heat_capacity_change",
    "ln_pressure",
    "load_policy",
    "load_table",
    "open_table",
]
