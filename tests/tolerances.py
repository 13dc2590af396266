"""Shared tolerances for the physics tests, each with the reason for its size.

A tolerance matches the precision of the source a check value comes from (the digits it
prints), or the accuracy an algorithm promises; never the error we happen to measure.
Relative tolerances are fractions (1e-3 = 0.1 %); absolute ones carry their unit.
"""

from __future__ import annotations

__all__ = [
    "ROUNDOFF",
    "ROOT",
    "NORMALISATION",
    "SAME_FORMULA",
    "DERIVATIVE",
    "CHEN_THOMSON_WAVENUMBER",
    "TMA_AGAINST_APPROXIMATE_WAVENUMBER",
    "MOMENT",
    "SPECTRAL_INTEGRAL",
    "PRINTED_3_FIGURES",
    "PRINTED_4_FIGURES",
    "CEM_EXAMPLE",
    "FENTON_MCKEE",
    "CAPILLARY",
    "DEPTH_FACTOR_TABLE",
    "TMA_HEIGHT",
    "PERIOD_RATIO",
    "SPREAD_CONSTANT",
    "SECH2_WIDTH",
    "FROM_MEMORY",
    "FROM_MEMORY_LOOSE",
]

#: Both sides are the same closed form in double precision (a few ulps of cancellation).
ROUNDOFF = 1e-12

#: Convergence promised by the inverse dispersion solver, k(ω, h) (relative).
ROOT = 1e-10

#: Spreading functions and fitted spectra integrate/scale exactly; quadrature at 1e-12
#: leaves this much (relative).
NORMALISATION = 1e-9

#: An oracle library evaluates the same formula in another order (float64): relative.
SAME_FORMULA = 1e-6

#: Central difference of ω(k) with step 1e-5·k: truncation ~1e-10, roundoff ~1e-11 (relative).
DERIVATIVE = 1e-7

#: wavespectra's `wavenuma` (Chen & Thomson polynomial, with 1/g written 0.10194) against
#: the exact root of the dispersion relation: its stated error is ≤ 0.07 % at 10 s; over
#: 0.02–1 Hz and 2–200 m we allow 0.15 % (relative).
CHEN_THOMSON_WAVENUMBER = 1.5e-3

#: A TMA spectrum built on that approximate wavenumber: φ ∝ (kh)² in shallow water, so
#: its error is at most twice the wavenumber's (relative).
TMA_AGAINST_APPROXIMATE_WAVENUMBER = 2 * CHEN_THOMSON_WAVENUMBER

#: The issue's accuracy target for the sea state's spectral moments (0.1 %, relative).
MOMENT = 1e-3

#: Integral of Ψ(kx, ky) over a polar lattice of 2000 × 360 points against m0 (relative).
SPECTRAL_INTEGRAL = 1e-4

#: A value printed to three significant figures, with room for g = 9.81 vs 9.80665 (relative).
PRINTED_3_FIGURES = 5e-3

#: A value printed to four significant figures (relative).
PRINTED_4_FIGURES = 1e-3

#: USACE Coastal Engineering Manual, Example II-1-1, printed to 3 figures (relative).
CEM_EXAMPLE = 2e-3

#: Fenton & McKee (1990): stated maximum error of their explicit wavelength (relative).
FENTON_MCKEE = 0.017

#: Capillary–gravity minimum phase speed and its wavelength, printed to 4 figures (relative).
CAPILLARY = 1e-3

#: Kitaigorodskii et al. (1975) depth factor printed to 4 decimals (absolute).
DEPTH_FACTOR_TABLE = 5e-4

#: TMA Hs values printed to 4 figures (relative).
TMA_HEIGHT = 1e-3

#: Tm01/Tp and Tm02/Tp printed to 4 decimals (absolute).
PERIOD_RATIO = 1e-3

#: Longuet-Higgins et al. (1963) normalisation G(s) printed to 6 decimals (absolute).
SPREAD_CONSTANT = 1e-6

#: Donelan et al. (1985) / Banner (1990) sech² width β printed to 4 decimals (absolute, 1/rad).
SECH2_WIDTH = 1e-4

#: A value recalled but not confirmed against its source, printed to 3 figures (relative).
FROM_MEMORY = 1e-2

#: A recalled law whose constants are themselves rounded (relative).
FROM_MEMORY_LOOSE = 5e-2
