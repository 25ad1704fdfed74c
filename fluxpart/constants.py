"""Physical constants, each defined once with its unit and source."""

__all__ = [
    "CARBON_MOLAR_MASS",
    "CO2_MOLAR_MASS",
    "KELVIN_OFFSET",
    "LLOYD_TAYLOR_E0_KELVIN",
    "LLOYD_TAYLOR_T0_KELVIN",
    "LLOYD_TAYLOR_TREF_KELVIN",
    "SECONDS_PER_DAY",
    "SOLAR_CONSTANT",
]

#: Standard atomic weight of carbon [g mol-1]; IUPAC Commission on Isotopic
#: Abundances and Atomic Weights, conventional value 12.011.
CARBON_MOLAR_MASS = 12.011

#: Molar mass of CO2 [g mol-1]; 12.011 + 2 x 15.999 (IUPAC conventional weights).
CO2_MOLAR_MASS = 44.009

#: 0 °C in kelvin [K]; definition of the Celsius scale (BIPM SI Brochure, 9th ed.).
KELVIN_OFFSET = 273.15

#: Total solar irradiance at 1 au [W m-2]; Kopp & Lean (2011), Geophys. Res. Lett.
#: 38, L01706, doi:10.1029/2010GL045777: 1360.8 ± 0.5 W m-2, rounded.
SOLAR_CONSTANT = 1361.0

#: Lloyd–Taylor temperature at which respiration would vanish [K]; Lloyd & Taylor
#: (1994), Functional Ecology 8:315–323, eq. 11.
LLOYD_TAYLOR_T0_KELVIN = 227.13

#: Lloyd–Taylor reference temperature [K] (10 °C); Lloyd & Taylor (1994).
LLOYD_TAYLOR_TREF_KELVIN = 283.15

#: Lloyd–Taylor activation-energy-like parameter of the paper's own fit [K];
#: Lloyd & Taylor (1994), eq. 11.
LLOYD_TAYLOR_E0_KELVIN = 308.56

#: Seconds in a day [s].
SECONDS_PER_DAY = 86400
