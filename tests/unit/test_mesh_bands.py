"""Band planning: element size h = c / f_top / elements_per_wavelength.

The rule of thumb of about six linear elements per wavelength for BEM is
common practice (e.g. Marburg, S. (2002), "Six boundary elements per
wavelength: is that enough?", J. Comput. Acoust. 10, 25-51); the 4 / 6
thresholds are our choice.
"""

import math

import pytest

from bemcheck.case.model import Case, Medium, MeshSettings
from bemcheck.errors import CaseError
from bemcheck.mesh import MeshNotice, band_of, plan_bands

THIRD_OCTAVES = tuple(100.0 * 2 ** (k / 3) for k in range(13))  # 100 Hz .. 1.6 kHz


def case(freqs=THIRD_OCTAVES, **mesh):
    return Case("bands", freqs, (), medium=Medium(speed_of_sound=343.0), mesh=MeshSettings(**mesh))


def test_octave_bands_hold_their_frequencies():
    bands = plan_bands(case())
    assert [len(b.frequencies) for b in bands] == [3, 3, 3, 3, 1]
    for k, b in enumerate(bands):
        assert b.index == k
        assert all(100 * 2**k <= f * (1 + 1e-12) < 100 * 2 ** (k + 1) for f in b.frequencies)
        assert b.element_size == pytest.approx(343.0 / b.f_high / 6.0)
        assert (b.f_low, b.f_high) == (b.frequencies[0], b.frequencies[-1])
    assert sorted(f for b in bands for f in b.frequencies) == sorted(THIRD_OCTAVES)
    assert band_of(bands, THIRD_OCTAVES[4]).index == 1
    with pytest.raises(KeyError):
        band_of(bands, 5000.0)


def test_half_octave_bands_and_finer_meshes():
    bands = plan_bands(case(band_octaves=0.5, elements_per_wavelength=8.0))
    assert len(bands) == math.ceil(len(THIRD_OCTAVES) / 1.5)
    assert bands[-1].element_size == pytest.approx(343.0 / THIRD_OCTAVES[-1] / 8.0)


def test_coarse_meshes_refused_or_warned():
    with pytest.raises(CaseError, match="elements_per_wavelength"):
        plan_bands(case(elements_per_wavelength=3.9))
    with pytest.warns(MeshNotice, match="elements_per_wavelength"):
        plan_bands(case(elements_per_wavelength=5.0))


@pytest.mark.parametrize(
    "freqs, mesh, words",
    [
        ((), {}, "frequencies"),
        ((0.0, 100.0), {}, "positive"),
        ((100.0,), {"band_octaves": 0.0}, "band_octaves"),
    ],
)
def test_bad_settings(freqs, mesh, words):
    with pytest.raises(CaseError, match=words):
        plan_bands(case(freqs, **mesh))
