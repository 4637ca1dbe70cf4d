"""Names of a package imported on first use (PEP 562), for ``vpaudit`` and
``vpaudit.readers``: importing either, or starting the command line, then imports neither
pandas nor the checks until a name that needs them is asked for.
"""

from __future__ import annotations

from collections.abc import Callable
from importlib import import_module
from typing import Any


def lazy_names(
    package: str, namespace: dict[str, Any], homes: dict[str, str]
) -> tuple[Callable[[str], Any], Callable[[], list[str]]]:
    """The ``__getattr__`` and ``__dir__`` of ``package``, whose globals are ``namespace``
    and whose name ``n`` is defined in the module ``homes[n]`` (relative to the package).
    A name once imported is stored in the package and found directly from then on.
    """

    def __getattr__(name: str) -> Any:
        home = homes.get(name)
        if home is None:
            raise AttributeError(f"module {package!r} has no attribute {name!r}")
        value = getattr(import_module(home, package), name)
        namespace[name] = value
        return value

    def __dir__() -> list[str]:
        return sorted(set(namespace) | set(homes))

    return __getattr__, __dir__
