"""Physical constants and standard values, each with its edition. One place for each."""

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
