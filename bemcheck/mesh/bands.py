"""Frequency bands, each meshed once at the element size its top frequency needs."""

import math
import warnings
from dataclasses import dataclass

from bemcheck.errors import CaseError
from bemcheck.mesh.checks import MeshNotice

REFUSED_BELOW = 4.0  # elements per wavelength
WARNED_BELOW = 6.0  # common practice for low-order BEM, no source for the exact figure


@dataclass(frozen=True)
class Band:
    """Case frequencies sharing one mesh.

    Parameters
    ----------
    index : int
        0, 1, ... from the lowest band.
    f_low, f_high : float
        Lowest and highest case frequency in the band [Hz].
    element_size : float
        Largest element edge [m]: c / f_high / elements_per_wavelength.
    frequencies : tuple of float
        The case frequencies in the band [Hz], ascending.
    """

    index: int
    f_low: float
    f_high: float
    element_size: float
    frequencies: tuple = ()

    def __contains__(self, frequency):
        return self.f_low <= frequency <= self.f_high


def plan_bands(case):
    """Split the case's frequencies into bands of ``case.mesh.band_octaves`` octaves.

    Bands start at the lowest frequency and are ``band_octaves`` wide; empty
    ones are skipped.  Each band's element size is set by its highest frequency.

    Returns
    -------
    tuple of Band

    Raises
    ------
    CaseError
        No frequencies, a frequency <= 0, band_octaves <= 0, or fewer than 4
        elements per wavelength (a warning below 6).

    Examples
    --------
    >>> from bemcheck.case.model import Case
    >>> [(b.f_low, b.f_high) for b in plan_bands(Case("t", (100.0, 150.0, 200.0, 400.0), ()))]
    [(100.0, 150.0), (200.0, 200.0), (400.0, 400.0)]
    """
    where = f"{case.path}: " if case.path else ""
    settings = case.mesh
    epw, octaves = settings.elements_per_wavelength, settings.band_octaves
    if not case.frequencies:
        raise CaseError(f"{where}frequencies: expected at least one frequency")
    if min(case.frequencies) <= 0:
        raise CaseError(f"{where}frequencies: expected positive values [Hz], found {min(case.frequencies)}")
    if not octaves > 0:
        raise CaseError(f"{where}mesh.band_octaves: expected > 0, found {octaves}")
    if not epw >= REFUSED_BELOW:
        raise CaseError(
            f"{where}mesh.elements_per_wavelength: {epw} is too coarse for the "
            f"BEM solve; expected at least {REFUSED_BELOW:g} (6 or more advised)"
        )
    if epw < WARNED_BELOW:
        warnings.warn(
            f"{where}mesh.elements_per_wavelength = {epw:g}: below "
            f"{WARNED_BELOW:g}, expect errors of several dB near the top of each band",
            MeshNotice,
            stacklevel=2,
        )
    freqs = sorted(set(float(f) for f in case.frequencies))
    f0 = freqs[0]
    groups = {}
    for f in freqs:
        # the tiny allowance puts a frequency exactly on a band edge into the upper band
        k = math.floor(math.log2(f / f0) / octaves + 1e-9)
        groups.setdefault(k, []).append(f)
    c = case.medium.speed_of_sound
    return tuple(
        Band(i, fs[0], fs[-1], c / fs[-1] / epw, tuple(fs)) for i, (_, fs) in enumerate(sorted(groups.items()))
    )


def band_of(bands, frequency):
    """The band holding ``frequency`` [Hz]; KeyError if none does."""
    for band in bands:
        if frequency in band:
            return band
    raise KeyError(frequency)
