"""Physical constants used across molid, each with its value, unit and source.

Every other module derives what it needs from these; no constant is typed twice.
"""

__all__ = [
    "AVOGADRO",
    "BOLTZMANN",
    "GAS_CONSTANT",
    "STANDARD_ATMOSPHERE",
    "ZERO_CELSIUS",
    "CONVENTIONAL_MASS_DENSITY",
    "CONVENTIONAL_AIR_DENSITY",
    "STANDARD_GRAVITY",
]

#: Avogadro constant N_A [1/mol]; exact by definition (SI Brochure, 9th ed., 2019).
AVOGADRO = 6.02214076e23

#: Boltzmann constant k [J/K]; exact by definition (SI Brochure, 9th ed., 2019).
BOLTZMANN = 1.380649e-23

#: Molar gas constant R = N_A·k [J/(mol·K)]; exact in the SI since 2019.
#: The product is 8.31446261815324; it is written out to the digits the
#: CODATA 2018 adjustment lists.
GAS_CONSTANT = AVOGADRO * BOLTZMANN

#: Standard atmosphere [Pa]; exact by definition (CGPM 1954, Resolution 4).
STANDARD_ATMOSPHERE = 101325.0

#: The Celsius zero on the kelvin scale [K]; exact by definition (SI Brochure, 2019).
ZERO_CELSIUS = 273.15

#: Reference density of the conventional mass [kg/m³] (OIML D 28:2004; OIML R 111-1:2004).
CONVENTIONAL_MASS_DENSITY = 8000.0

#: Reference air density of the conventional mass [kg/m³] (OIML D 28:2004).
CONVENTIONAL_AIR_DENSITY = 1.2

#: Standard acceleration of free fall g_n [m/s²]; exact by definition (3rd CGPM, 1901).
STANDARD_GRAVITY = 9.80665
