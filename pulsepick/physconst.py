"""Physical constants used by the junction and panel models.

The Boltzmann constant and the elementary charge are exact by definition since the
2019 revision of the SI (BIPM, The International System of Units, 9th edition, 2019,
table 1); ``tests/test_physconst.py`` checks them against scipy.constants (CODATA).
Kept here as plain numbers so that importing a model does not import scipy.constants.
"""

BOLTZMANN_J_PER_K = 1.380649e-23  # J/K, exact (SI 2019)
ELEMENTARY_CHARGE_C = 1.602176634e-19  # C, exact (SI 2019)
K_OVER_Q_V_PER_K = BOLTZMANN_J_PER_K / ELEMENTARY_CHARGE_C  # V/K
