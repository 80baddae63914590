"""Stated limits of a case: physical ranges, and the sizes a case implies, checked before any work.

The ranges are wide.  They refuse what no acoustic layout means and what
would otherwise end in overflow, NaN or an exhausted memory long after the
run started (a speed of sound of 1e-300 m/s, an observer 1e200 m away, a
sweep of a billion frequencies): every refusal names the key and the figure.
"""

import math
from dataclasses import dataclass

from bemcheck.errors import CaseError
from bemcheck.memory import available_memory
from bemcheck.observers import for_observers, sector_mask


@dataclass(frozen=True)
class Range:
    """A closed physical range ``low``..``high`` in ``unit``, stated in messages as ``what``.

    Examples
    --------
    >>> SPEED_OF_SOUND.expected()
    'a speed of sound from 10 to 10000 m/s'
    """

    low: float
    high: float
    unit: str
    what: str

    def expected(self):
        return f"{self.what} from {self.low:g} to {self.high:g} {self.unit}".rstrip()


# Gases lie from about 130 m/s (sulphur hexafluoride) to 1,300 m/s (hydrogen),
# water at 1,482 m/s (20 °C); from memory.  A tenth of the lowest to several
# times the highest keeps every fluid bemcheck could be asked about.
SPEED_OF_SOUND = Range(10.0, 1.0e4, "m/s", "a speed of sound")
# Hydrogen 0.084 kg/m³ and mercury 13,546 kg/m³ at 20 °C (from memory); wider either side.
DENSITY = Range(1.0e-3, 3.0e4, "kg/m^3", "a density")
# Infrasound to ultrasound far beyond hearing (common practice, no source).
FREQUENCY = Range(1.0e-2, 1.0e6, "Hz", "a frequency")
# 1e-12 m³/s gives about -140 dB SPL at 1 m and 1 kHz; 100 m³/s is a 0.5 m² cone
# moving 30 mm at 1 kHz (p = ρωq/4π at 1 m, see README "Conventions").
STRENGTH = Range(1.0e-12, 100.0, "m^3/s", "a volume-velocity amplitude")
# A layout within 10 km of the origin: the phase kr at 1 MHz stays below 2e8 rad,
# where double precision still holds it to 1e-7 rad (IEEE 754 binary64, 2^-52 relative).
COORDINATE = Range(-1.0e4, 1.0e4, "m", "a coordinate")
DISTANCE = Range(1.0e-6, 1.0e4, "m", "a distance")
# Body dimensions from 10 µm to 1 km.
SIZE = Range(1.0e-5, 1.0e3, "m", "a length")
# Bessel-horn flare exponents of brass bells lie near 0.5 to 1 (Fletcher & Rossing
# 1998, The Physics of Musical Instruments, sec. 8.4; from memory); wide either side.
FLARE = Range(1.0e-2, 20.0, "", "a flare exponent")
# How far a built control may stray from its design: beyond metres it is another layout.
PLACEMENT = Range(0.0, 10.0, "m", "a placement tolerance")
SCALE = Range(1.0e-6, 1.0e3, "m per file unit", "a scale")
# Amplifier channels run from headphone outputs (about 1 V, 0.1 A) to large power
# amplifiers (about 200 V, 50 A); from memory.  Far wider either side.
VOLTAGE_RMS = Range(1.0e-3, 1.0e4, "V", "an RMS voltage")
CURRENT_RMS = Range(1.0e-4, 1.0e3, "A", "an RMS current")
# An axis is a direction: its length does not matter, but one that squares to
# zero or to infinity cannot be normalised.
DIRECTION = Range(1.0e-9, 1.0e9, "", "a direction [x, y, z] with its largest component (in magnitude)")

# Low-order BEM wants 6 to 10 elements per wavelength (Marburg 2002, J. Comput.
# Acoust. 10(1) 25-51; from memory); beyond 100 the cost (growing as its fourth
# power) buys nothing the geometric size bounds do not already give.
MAX_ELEMENTS_PER_WAVELENGTH = 100.0

# Counts.  A BEM frequency costs seconds to minutes: 10,000 is days of solves.
MAX_FREQUENCIES = 10_000
# 0.01° between directions, far finer than any pattern a body of ka < 100 has.
MAX_DIRECTIONS = 36_000
# The 5th percentile of n draws has a standard error of sqrt(0.05 × 0.95 / n) in
# probability (David & Nagaraja 2003, Order Statistics, sec. 10.2; from memory):
# 7e-4 at 100,000 draws, below anything a tolerance decision can use.
MAX_TRIALS = 100_000
# Memory the results take per frequency, direction and signal (each source and
# the controlled system): complex pressures of both models, departures, status
# and masks, with the copies made while combining and writing.  Measured: 139
# bytes (peak resident memory of `bemcheck run` (both models) on a case without
# bodies, 181 frequencies x 3,600 directions x 3 signals, 485 MiB against 226 MiB
# with 12 directions); rounded up.
RESULT_BYTES = 200
# Points closer than this (two sources, an observer point and a source) are one point to the models [m].
COINCIDENT = 1.0e-6


def frequency_count(start, stop, per_octave):
    """Frequencies of a geometric series from ``start`` to ``stop`` [Hz] with ``per_octave`` per octave.

    Examples
    --------
    >>> frequency_count(100.0, 800.0, 3)
    10
    """
    return int(math.floor(per_octave * math.log2(stop / start) + 1e-9)) + 1


def check_case(case):
    """Refuse, naming the key, a case whose observers, sectors or size cannot give a sound answer.

    * an observer point at a source (the fields there are infinite);
    * a tolerance or control sector holding no far-field direction (it would
      be judged on nothing);
    * results too large for this machine's memory.

    Raises
    ------
    CaseError
    """
    file = str(case.path)
    for i, p in enumerate(case.observers.points):
        for s in case.sources:
            gap = math.dist(p.at, s.position)
            if gap < COINCIDENT:
                raise CaseError(
                    f"{file}: observers.points[{i}].at: observer point '{p.name}' coincides with "
                    f"source '{s.name}' ({gap:g} m apart); expected a point at least "
                    f"{COINCIDENT:g} m from every source (the field at a source is infinite)"
                )
    directions = for_observers(case.observers.far_field)
    sectors = [(f"tolerance.sectors[{i}]", s) for i, s in enumerate(case.tolerance.sectors)]
    sectors.extend(case.control.sectors())
    for key, s in sectors:
        if not sector_mask(directions.plane, directions.azimuth_deg, s).any():
            raise CaseError(
                f"{file}: {key}: sector '{s.name}' ({s.from_deg:g}° to {s.to_deg:g}° in {s.plane or 'the first plane'}) "
                f"holds no far-field direction ({_spacing(case.observers.far_field, s.plane)}); expected a sector "
                "holding at least one direction: widen it or make the directions finer"
            )
    _check_result_size(case, len(directions), file)


def _spacing(far_field, plane):
    """How the directions of the plane labelled ``plane`` (None: the first) are spaced, in words."""
    keys = (
        [f"observers.far_field[{i}]" for i in range(len(far_field))] if len(far_field) > 1 else ["observers.far_field"]
    )
    i = next((i for i, f in enumerate(far_field) if f.label == plane), 0)
    far, key = far_field[i], keys[i]
    if far.sphere:
        return f"{key}.degree = {far.degree}: {len(for_observers(far))} directions"
    return f"{key}.step_deg = {far.step_deg:g}: a direction every {360.0 / round(360.0 / far.step_deg):g}°"


def _check_result_size(case, n_directions, file):
    signals = len(case.sources) + 1
    needed = RESULT_BYTES * len(case.frequencies) * n_directions * signals
    if needed < 2**28:
        return  # 256 MiB: any machine bemcheck runs on holds that
    available = available_memory()
    if available is not None and needed > available:
        gib = 1024.0**3
        raise CaseError(
            f"{file}: frequencies, observers.far_field: {len(case.frequencies):,} frequencies × {n_directions:,} "
            f"directions × {signals} signals need about {needed / gib:.1f} GiB for the results, but "
            f"{available / gib:.1f} GiB of memory is available; expected fewer frequencies or coarser directions"
        )
