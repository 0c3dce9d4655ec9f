"""The IEC 60063 E24 series' significant figures: the one table of them.

A root module with no imports, so both the value parser (``core.units``,
which reads the capacitor three-digit code) and the series module
(``core.parts.eseries``) take it from here.

References: IEC 60063:2015, table 1 (E24; several values differ from plain
rounding of 10^(i/24)).
"""

E24_FIGURES = (10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30,
               33, 36, 39, 43, 47, 51, 56, 62, 68, 75, 82, 91)
"""The two significant figures of each E24 value in one decade, 1.0 … 9.1 as 10 … 91."""
