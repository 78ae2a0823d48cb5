"""Thermal radiation of a blackbody: Planck's law, Wien's displacement law, Stefan-Boltzmann.

Constants are the CODATA 2018 recommended values (exact SI-defining constants for h, c, k).

References
----------
- E. Tiesinga et al., "CODATA recommended values of the fundamental physical constants: 2018",
  Rev. Mod. Phys. 93, 025010 (2021); NIST SP 961 (2019).
- M. Planck, "Ueber das Gesetz der Energieverteilung im Normalspectrum", Ann. Phys. 309 (1901).
- CIE 015:2018 Colorimetry, 4th ed., section on the Planckian radiator.
"""

from __future__ import annotations

import numpy as np

PLANCK_H = 6.62607015e-34  # J s (exact)
SPEED_OF_LIGHT_C = 299792458.0  # m s^-1 (exact)
BOLTZMANN_K = 1.380649e-23  # J K^-1 (exact)
FIRST_RADIATION_C1 = 2 * np.pi * PLANCK_H * SPEED_OF_LIGHT_C**2  # W m^2, c1 = 2 pi h c^2
FIRST_RADIATION_C1L = 2 * PLANCK_H * SPEED_OF_LIGHT_C**2  # W m^2 sr^-1, c1L = 2 h c^2
SECOND_RADIATION_C2 = PLANCK_H * SPEED_OF_LIGHT_C / BOLTZMANN_K  # m K, CODATA 2018: 1.438776877e-2
WIEN_B = 2.897771955e-3  # m K, CODATA 2018 Wien wavelength displacement law constant
STEFAN_BOLTZMANN_SIGMA = 2 * np.pi**5 * BOLTZMANN_K**4 / (15 * PLANCK_H**3 * SPEED_OF_LIGHT_C**2)



def spectral_radiance(wavelength_m, temperature_k, c2=SECOND_RADIATION_C2):
    """Spectral radiance of a blackbody, Planck's law, in W sr^-1 m^-3.

    ``L(lambda, T) = c1L / lambda^5 / (exp(c2 / (lambda T)) - 1)``

    Arrays broadcast against each other. ``c2`` may be overridden to reproduce older
    definitions (CIE illuminant A uses c2 = 1.435e-2 m K).

    >>> round(float(spectral_radiance(500e-9, 5000)) / 1e13, 3)
    1.211
    """
    wavelength_m = np.asarray(wavelength_m, dtype=float)
    temperature_k = np.asarray(temperature_k, dtype=float)
    if np.any(wavelength_m <= 0) or np.any(temperature_k <= 0):
        raise ValueError("wavelength and temperature must be positive")
    return FIRST_RADIATION_C1L / wavelength_m**5 / np.expm1(c2 / (wavelength_m * temperature_k))


def peak_wavelength_m(temperature_k):
    """Wavelength of maximum spectral radiance, Wien's displacement law: ``lambda_max = b / T``.

    >>> round(float(peak_wavelength_m(1000)) * 1e6, 3)
    2.898
    """
    temperature_k = np.asarray(temperature_k, dtype=float)
    if np.any(temperature_k <= 0):
        raise ValueError("temperature must be positive")
    return WIEN_B / temperature_k


def radiant_exitance(temperature_k, emissivity=1.0):
    """Total radiant exitance of a grey body, Stefan-Boltzmann law, ``M = eps sigma T^4`` in W m^-2.

    >>> round(float(radiant_exitance(1000)) / 1e3, 2)
    56.7
    """
    return emissivity * STEFAN_BOLTZMANN_SIGMA * np.asarray(temperature_k, dtype=float) ** 4
