"""Levels at the observer points attributed: the instrument alone, the controls alone, the total.

The problem is linear, so the pressure at a point is the complex sum of the
primaries' part and the controls' part.  Each part is reported in dB and
dB(A) per harmonic, with the model it comes from (the BEM where it was
solved at that harmonic, else the free field).  A level above the limit is a
no-go of the layout only where the controls raise it there; an instrument
that is loud on its own is a caution about the instrument.

Pressures are complex peak amplitudes [Pa]; levels RMS, dB re 20 µPa.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.prebuild.safety import a_weighting
from bemcheck.solvers.freefield import spl_from_pressure

MODEL_BEM = "BEM (scattering included)"
MODEL_FREE = "free field (monopoles)"


@dataclass(frozen=True, eq=False)
class PointPressures:
    """Pressures at the observer points per harmonic, (H, P) complex [Pa, peak], and their model.

    ``total`` is computed from all strengths at once, not as the sum of the
    other two, so their sum checks it.
    """

    instrument: np.ndarray
    controls: np.ndarray
    total: np.ndarray
    models: tuple[str, ...]


def point_variables(ds, plan, points):
    """Add the attributed pressures and levels to ``ds`` (dimensions ``harmonic``, ``point``), in place.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset(coords={"harmonic": [0], "point": ["ear"]})
    >>> p = np.array([[np.sqrt(2.0)]])
    >>> point_variables(ds, [("A", 1, 1000.0)], PointPressures(p, 0 * p, p, (MODEL_FREE,)))
    >>> round(float(ds["dba_points_total"][0, 0]), 2), str(ds["points_model"].values[0])
    (93.98, 'free field (monopoles)')
    """
    a = a_weighting(np.array([f for _, _, f in plan], dtype=float))[:, None]
    dims = ("harmonic", "point")
    for part, p in (("instrument", points.instrument), ("controls", points.controls), ("total", points.total)):
        ds[f"p_points_{part}"] = (dims, p)
        spl = spl_from_pressure(p)
        ds[f"spl_points_{part}_db"] = (dims, spl)
        ds[f"dba_points_{part}"] = (dims, spl + a)
    ds["points_model"] = ("harmonic", list(points.models))


def ear_items(ears, item, lines):
    """Go/no-go items of the levels at the points: a no-go only where the controls raise a level
    above the limit; an instrument over it on its own adds a caution line."""
    for note, e in ears:
        if not len(e.points):
            continue
        model = ", ".join(dict.fromkeys(e.models)) or MODEL_FREE
        raised = [n for n, r in zip(e.points, e.raised_by_control) if r]
        loud = float(np.max(e.dba_with))
        if raised:
            item(
                False,
                f"levels at observer points for {note} ({model}): the controls raise "
                f"{', '.join(raised)} above {e.limit_dba:g} dB(A) (up to {loud:.1f} dB(A) with control)",
            )
        else:
            item(
                True,
                f"levels at observer points for {note} ({model}): up to {loud:.1f} dB(A) with control; "
                f"the controls raise no point above {e.limit_dba:g} dB(A)",
            )
        for name, over, alone, total in zip(e.points, e.instrument_over, e.dba_without, e.dba_with):
            if over:
                lines.append(
                    f"  caution: {name}, {note}: the instrument alone gives {alone:.1f} dB(A), above "
                    f"{e.limit_dba:g} dB(A) (with control {total:.1f}): a caution about the instrument, "
                    "not a no-go of the layout"
                )


def ear_summary(ears):
    """JSON-ready levels per note and point, units in the keys."""
    out = []
    for note, e in ears:
        out.append(
            {
                "note": note,
                "points": list(e.points),
                "models": list(e.models),
                "limit_dba": e.limit_dba,
                "frequency_hz": [float(f) for f in e.frequencies],
                "instrument_dba": [float(v) for v in e.dba_without],
                "controls_dba": [float(v) for v in e.dba_controls],
                "total_dba": [float(v) for v in e.dba_with],
                "spl_instrument_db": e.spl_without.tolist(),
                "spl_controls_db": e.spl_controls.tolist(),
                "spl_total_db": e.spl_with.tolist(),
                "raised_by_control": [bool(v) for v in e.raised_by_control],
                "instrument_over": [bool(v) for v in e.instrument_over],
                "cautions": list(e.cautions),
            }
        )
    return out
