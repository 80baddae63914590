"""A deep residual's error is carried into the attenuation against the uncontrolled level.

Worked by hand with interval arithmetic: an uncontrolled far field of amplitude
1 and a controlled residual of 0.01 (40 dB of attenuation) whose amplitude is
known to ±e_c = 0.01 (as large as the residual itself).  Relative to the
residual the residual is not known at all (it may be zero); relative to the
uncontrolled level it is known to −40 dB, so the attenuation is surely at least
20 log10(1 / (0.01 + 0.01)) = 33.98 dB: it may be 6.02 dB lower, and by how
much higher is unknown.  Judged against a 30 dB target with 3 dB tolerated,
the design surely holds (shortfall −10 dB, at most −3.98 dB with the error).
"""

import numpy as np

from bemcheck.compare.attenuation import attenuation
from bemcheck.compare.errors import CAP_DB
from bemcheck.compare.trust import AGREES, judge_shortfall, shortfall_db

RESIDUAL = 1e-2
ERROR = 1e-2
RATIO = 1.5  # the check mesh 1.5 times coarser: Richardson divides its difference by 1.5² − 1


def _deep_design():
    far = np.array([[[1.0], [-(1.0 - RESIDUAL)]]], dtype=complex)  # (F, S, D) = (1, 2, 1)
    far_check = far.copy()
    far_check[0, 1, 0] += ERROR * (RATIO**2 - 1.0)  # the check mesh's control field differs
    power = np.array([[[1.0, -(1.0 - RESIDUAL)], [-(1.0 - RESIDUAL), 1.0]]], dtype=complex)
    q_u, q_c = np.array([[1.0, 0.0]], dtype=complex), np.array([[1.0, 1.0]], dtype=complex)
    return attenuation(far, power, q_u, q_c, check=(far_check, power, q_c, np.array([RATIO])))


def test_a_deep_residual_is_bounded_below_by_its_error_relative_to_the_uncontrolled_level():
    a = _deep_design()
    np.testing.assert_allclose(a.controlled_error, [[ERROR]], rtol=1e-9)
    np.testing.assert_allclose(a.directional_db, [[40.0]], atol=1e-9)
    np.testing.assert_allclose(a.directional_below_db, [[40.0 - 20 * np.log10(1.0 / (RESIDUAL + ERROR))]], rtol=1e-9)
    assert a.directional_error_db[0, 0] == CAP_DB  # how much higher it may be: unknown


def test_a_deep_design_known_only_against_the_uncontrolled_level_surely_holds():
    a = _deep_design()
    short = shortfall_db(40.0, a.directional_db, 30.0)
    status = judge_shortfall(short, a.directional_error_db, 3.0, a.directional_below_db)
    assert status[0, 0] == AGREES
    # were it judged with the error either way (the residual against itself), it could not be told
    assert judge_shortfall(short, a.directional_error_db, 3.0)[0, 0] != AGREES
