"""A-weighting and level sums against IEC 61672-1:2013 and handbook rules."""

import numpy as np
import pytest

from bemcheck.prebuild import a_weighting, overall_dba, sum_levels
from bemcheck.prebuild.safety import A_1000, A_POLES


@pytest.mark.parametrize(
    ("nominal", "table_db"),
    [
        (31.5, -39.4),
        (63, -26.2),
        (100, -19.1),
        (250, -8.6),
        (500, -3.2),
        (1000, 0.0),
        (2000, 1.2),
        (4000, 1.0),
        (8000, -1.1),
        (16000, -6.6),
    ],
)
def test_table_values(nominal, table_db):
    """IEC 61672-1:2013, Table 3, A-weighting at nominal frequencies, given to
    0.1 dB and computed at the exact base-ten frequencies 1000·10^(n/10) Hz
    (table values from memory; the same numbers are reproduced in the
    python-acoustics documentation, acoustics.weighting.THIRD_OCTAVE_A_WEIGHTING)."""
    exact = 1000.0 * 10.0 ** (round(10.0 * np.log10(nominal / 1000.0)) / 10.0)
    assert a_weighting(exact) == pytest.approx(table_db, abs=0.05 + 1e-9)


def test_pole_frequencies_and_normalisation():
    """IEC 61672-1:2013, Annex E: f1 ≈ 20.60 Hz, f2 ≈ 107.7 Hz, f3 ≈ 737.9 Hz,
    f4 ≈ 12194 Hz and A1000 = -2.000 dB, the rounded constants of eq. E.6
    (from memory)."""
    f1, f2, f3, f4 = A_POLES
    assert f1 == pytest.approx(20.60, abs=0.005)
    assert f2 == pytest.approx(107.7, abs=0.05)
    assert f3 == pytest.approx(737.9, abs=0.05)
    assert f4 == pytest.approx(12194.0, abs=0.5)
    assert A_1000 == pytest.approx(-2.000, abs=5e-4)


def test_asymptotic_slopes():
    """IEC 61672-1:2013, eq. E.6 has four zeros at 0 Hz and poles at f1 (double),
    f2, f3 and f4 (double): far below f1 the weighting grows as f⁴
    (+24.08 dB per octave), far above f4 it falls as 1/f² (-12.04 dB per octave)."""
    assert a_weighting(0.2) - a_weighting(0.1) == pytest.approx(20 * np.log10(2**4), abs=0.01)
    assert a_weighting(4e6) - a_weighting(2e6) == pytest.approx(-20 * np.log10(2**2), abs=0.02)


def test_energy_sum():
    """Incoherent levels add as energies: two equal levels give +10 log10 2 =
    3.01 dB, ten equal levels +10 dB (any acoustics handbook, e.g. Kinsler
    et al. 2000, ch. 5 'combining sound levels'; from memory)."""
    assert sum_levels([80.0, 80.0]) == pytest.approx(80.0 + 10 * np.log10(2), abs=1e-12)
    assert sum_levels(np.full(10, 70.0)) == pytest.approx(80.0, abs=1e-12)
    # A 1 kHz tone is unweighted; a 100 Hz tone at the same level adds
    # 10 log10(1 + 10^(-19.14/10)) (IEC 61672-1 table, as above).
    both = overall_dba([100.0, 1000.0], [90.0, 90.0])
    assert both == pytest.approx(90.0 + 10 * np.log10(1 + 10 ** (a_weighting(100.0) / 10)), abs=1e-12)
    assert both == pytest.approx(90.053, abs=0.002)
