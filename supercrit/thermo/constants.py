"""Physical constants [SI]."""

R_CODATA_2018 = 8.31446261815324  # [J mol-1 K-1] CODATA 2018 (codata2018), R = N_A k_B, exact since 2019
P_REF = 101325.0  # [Pa] reference pressure of the ideal-gas h/s reference state (1 standard atmosphere, exact by definition)
T_REF = 298.15  # [K] reference temperature of the ideal-gas h/s reference state (25 degC, conventional)
