from scipy import constants

from pulsepick.physconst import BOLTZMANN_J_PER_K, ELEMENTARY_CHARGE_C, K_OVER_Q_V_PER_K


def test_constants_match_the_reference_library():
    # scipy.constants (CODATA 2018, a general-purpose reference library)
    assert BOLTZMANN_J_PER_K == constants.k
    assert ELEMENTARY_CHARGE_C == constants.e
    # kT/q at 300 K is 25.85 mV (derived from ref:codata-2018)
    assert abs(K_OVER_Q_V_PER_K * 300.0 - 0.025852) < 1e-6
