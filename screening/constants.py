"""Physical constants and standard values, each with its edition. One place for each."""

import math

#: Molar gas constant [J/(mol K)]. CODATA 2018 recommended value (exact since the 2019 SI).
R = 8.314462618

#: Standard atmospheric pressure [Pa]. ISO 2533:1975 / ICAO standard atmosphere, sea level.
P_STANDARD_ATMOSPHERE = 101325.0

#: Standard-atmosphere sea-level temperature [K] and lapse rate [K/m] (ISO 2533:1975, troposphere).
T0_STANDARD_ATMOSPHERE = 288.15
LAPSE_RATE_STANDARD_ATMOSPHERE = 0.0065

#: Standard gravity [m/s2] (CGPM 1901, exact) and molar mass of dry air [kg/mol] (ISO 2533:1975).
G0 = 9.80665
M_AIR_STANDARD_ATMOSPHERE = 0.0289644

#: Zero of the Celsius scale [K] (SI definition).
T_ZERO_CELSIUS = 273.15

#: Stefan–Boltzmann constant [W/(m2 K4)]: sigma = 2 pi^5 k^4 / (15 h^3 c^2) with the exact 2019-SI values of
#: the Boltzmann constant k, the Planck constant h and the speed of light c (CODATA 2018 lists it
#: truncated as 5.670374419e-8).
STEFAN_BOLTZMANN = 2.0 * math.pi ** 5 * 1.380649e-23 ** 4 / (15.0 * 6.62607015e-34 ** 3 * 299792458.0 ** 2)
