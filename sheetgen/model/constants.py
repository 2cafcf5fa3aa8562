"""Physical constants and SPICE's nominal temperature, shared by the device equations and the part fits."""

BOLTZMANN = 1.380649e-23  # J/K, CODATA 2018 exact
CHARGE = 1.602176634e-19  # C, CODATA 2018 exact
T_NOMINAL_K = 300.15  # SPICE's default TNOM and TEMP, 27 °C
VT_NOMINAL = BOLTZMANN * T_NOMINAL_K / CHARGE
