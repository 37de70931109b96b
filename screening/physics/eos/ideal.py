"""Ideal-gas model of a closed rigid tank.

P v = R T (molar volume v [m3/mol]); at fixed molar density rho = 1/v the pressure is linear in T,
so P2 = P1 T2 / T1, the textbook shortcut. R from CODATA 2018 (`screening.constants.R`).

Valid for a gas far from condensation at low pressure; at cylinder pressures it under-predicts the
peak of most gases. It is reported beside the real-gas models for comparison and never alone makes a
vessel "within".
"""

from __future__ import annotations

import numpy as np

from screening.constants import R


def ideal_gas_density(pressure, temperature):
    """Molar density [mol/m3] of an ideal gas at `pressure` [Pa] (absolute) and `temperature` [K].

    rho = P / (R T).

    >>> round(float(ideal_gas_density(101325.0, 273.15)), 3)
    44.615
    """
    return np.asarray(pressure, dtype=float) / (R * np.asarray(temperature, dtype=float))


def ideal_gas_pressure(molar_density, temperature):
    """Pressure [Pa] (absolute) of an ideal gas at `molar_density` [mol/m3] and `temperature` [K].

    P = rho R T; with rho fixed (closed rigid tank) this is P2 = P1 T2 / T1.

    >>> round(float(ideal_gas_pressure(ideal_gas_density(2.0e7, 288.15), 338.15)))
    23470415
    """
    return np.asarray(molar_density, dtype=float) * R * np.asarray(temperature, dtype=float)
