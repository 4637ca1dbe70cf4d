"""vpaudit: audit tables of vapour-pressure equation coefficients.

The public API; the CLI only wraps these. Typical use::

    import vpaudit
    result = vpaudit.audit("sample_db")          # a table directory, file or .duckdb store
    for finding in result.findings:
        print(finding.severity, finding.check, finding.message)
"""

from .api import open_table
from .audit import AuditResult, audit, audit_table
from .checks import Finding, Severity
from .equations import Curves, curves_from_frame, enthalpy, heat_capacity_change, ln_pressure
from .errors import (
    EquationError,
    PolicyError,
    RecordRuleError,
    StoreError,
    TableError,
    TableErrors,
    UnitError,
    UnknownCheckError,
    VpauditError,
)
from .lookup import eval_substance
from .policy import Policy, load_policy
from .readers import Table, load_table

__version__ = "0.1.0"

__all__ = [
    "AuditResult",
    "Curves",
    "EquationError",
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
