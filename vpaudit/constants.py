"""Physical constants and unit factors, exact in the SI (no import of scipy at start-up).

Every value here is exact by definition, so writing it out loses nothing; the test suite
compares each with :mod:`scipy.constants` (CODATA). Importing scipy.constants would add a
tenth to vpaudit's start-up, paid on every run of the CI gate (docs/performance.md).
"""

from __future__ import annotations

from typing import Final

#: Molar gas constant R = N_A k, exact since the 2019 SI redefinition. [J/(mol K)]
R: Final[float] = 8.31446261815324
#: Standard atmosphere. [Pa]
ATM: Final[float] = 101325.0
#: Bar. [Pa]
BAR: Final[float] = 1e5
#: Torr, 1/760 atm. [Pa]
TORR: Final[float] = 101325.0 / 760.0
#: Pound-force per square inch (avoirdupois pound, standard gravity 9.80665 m/s^2). [Pa]
PSI: Final[float] = 0.45359237 * 9.80665 / 0.0254**2
#: Zero of the Celsius scale. [K]
ZERO_CELSIUS: Final[float] = 273.15
#: Thermochemical calorie. [J]
CALORIE: Final[float] = 4.184
