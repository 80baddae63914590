"""Polar plots of the far-field level in each far-field plane, in absolute level on one scale for all panels.

The controlled system is drawn at the case's primary strengths as sound
pressure level at 1 m (dB re 20 µPa, RMS of the peak amplitudes stored),
with the uncontrolled field (the primaries alone) beside it; a single
source is drawn at its own strength when it is a primary, else per unit
volume velocity.  Every panel shares one radial scale, so levels compare
across frequencies; what falls below the scale's floor is drawn on it, and
the axis label says so.
"""

import numpy as np

from bemcheck.compare import CONTROLLED
from bemcheck.report import style
from bemcheck.report.signals import figure_planes, plane_directions, plane_words, signal_fields, signal_label
from bemcheck.solvers.freefield import spl_from_pressure

# Polar plots reach 10 dB below the quietest curve's median level, but span
# at least POLAR_RANGE_DB and at most POLAR_MAX_RANGE_DB below the loudest
# (common practice, no source: deeper than that a plot shows only nulls).
POLAR_RANGE_DB = 40.0
POLAR_MAX_RANGE_DB = 80.0
# The scale's top is the loudest level rounded up to this step [dB].
POLAR_STEP_DB = 10.0
CURVE_STYLE = {
    "free field": {"color": style.FREE, "lw": 1.8},
    "scattered": {"color": style.SCATTERED, "lw": 1.6},
    "scattered, as designed": {"color": style.SCATTERED, "lw": 1.6},
    "scattered, re-optimised": {"color": style.REOPTIMISED, "lw": 1.3, "ls": (0, (5, 2))},
    "primaries alone": {"color": style.MUTED, "lw": 1.2, "ls": (0, (2, 2))},
    "primaries alone, scattered": {"color": style.MUTED, "lw": 1.2, "ls": (0, (2, 2))},
}


def _source_scale(ds, signal, primary_q):
    """(factor [m^3/s], words) turning a single source's field per unit strength into its field."""
    roles = list(ds["role"].values)
    names = [str(s) for s in ds["source"].values]
    s = names.index(signal)
    if primary_q is not None and roles[s] == "primary":
        q = complex(np.asarray(primary_q)[[i for i, r in enumerate(roles) if r == "primary"].index(s)])
        return q, f"at its strength |q| = {abs(q):.3g} m³/s"
    return 1.0, "per m³/s of volume velocity"


def polar_levels(ds, signal, primary_q=None, plane=None):
    """Levels [dB re 20 µPa, SPL at 1 m] of each curve over all frequencies and plane directions.

    Parameters
    ----------
    ds : xarray.Dataset
    signal : str
        A source name or ``"controlled"``.
    primary_q : (Np,) array_like, optional
        Primary strengths [m^3/s]; needed for ``"controlled"``.
    plane : str, optional
        The label of the far-field plane (default the first).

    Returns
    -------
    (dict[str, (F, D') ndarray], str)
        Curve label -> level on the D' directions near the plane, and how
        the source strengths were set, in words.
    """
    idx = plane_directions(ds, plane)
    fields = signal_fields(ds, signal, primary_q)
    if signal == CONTROLLED:
        scale, words = 1.0, "the primaries at the case's strengths"
    else:
        scale, words = _source_scale(ds, signal, primary_q)
    return {label: spl_from_pressure(scale * p[:, idx]) for label, p in fields.items()}, words


def polar_figure(ds, signal, frequencies, primary_q=None, plane=None):
    """Far-field level in one far-field plane, one panel per frequency, each model a curve, one scale.

    Parameters
    ----------
    ds : xarray.Dataset
    signal : str
        A source name or ``"controlled"``.
    frequencies : sequence of float
        Solved frequencies to show [Hz] (the nearest solved ones are used).
    primary_q : (Np,) array_like, optional
        Primary strengths [m^3/s]; needed for ``"controlled"``.
    plane : str, optional
        The label of the far-field plane drawn (default the first).

    Returns
    -------
    matplotlib.figure.Figure or None
        None when fewer than three directions lie near the plane.
    """
    idx = plane_directions(ds, plane)
    if idx.size < 3:
        return None
    levels, words = polar_levels(ds, signal, primary_q, plane)
    f_all = ds["frequency"].values
    rows = [int(np.argmin(np.abs(f_all - freq))) for freq in frequencies]
    loudest = max(float(v[rows].max()) for v in levels.values())
    top = POLAR_STEP_DB * np.ceil(loudest / POLAR_STEP_DB)
    typical = min(float(np.median(v[i])) for v in levels.values() for i in rows)
    span = POLAR_STEP_DB * np.ceil((top - typical + 10.0) / POLAR_STEP_DB)
    floor = top - float(np.clip(span, POLAR_RANGE_DB, POLAR_MAX_RANGE_DB))
    theta = np.radians(ds["azimuth_deg"].values[idx])
    theta = np.append(theta, theta[0] + 2.0 * np.pi)
    n = len(rows)
    fig = style.new_figure(min(3.0 * n + 0.6, 12.5), 4.1)
    for k, i in enumerate(rows):
        ax = fig.add_subplot(1, n, k + 1, projection="polar")
        for label, level in levels.items():
            ax.plot(theta, np.append(level[i], level[i][0]).clip(floor), label=label, **CURVE_STYLE[label])
        ax.set_rlim(floor, top)
        ax.set_rticks(np.arange(floor + POLAR_STEP_DB, top + 0.1, POLAR_STEP_DB * (2 if top - floor > 50 else 1)))
        ax.yaxis.set_major_formatter("{x:.0f}")
        ax.tick_params(axis="y", labelsize=6.5, labelcolor=style.MUTED)
        ax.tick_params(axis="x", labelsize=7)
        ax.set_rlabel_position(100.0)
        ax.set_title(f"{f_all[i]:.0f} Hz", loc="center", fontsize=9)
    handles, labels = fig.axes[0].get_legend_handles_labels()
    fig.legend(
        handles,
        labels,
        loc="outside lower center",
        ncol=len(labels),
        title_fontsize=7.5,
        title=f"one scale for every panel; levels below {floor:.0f} dB are drawn at {floor:.0f} dB",
    )
    fig.suptitle(
        f"SPL at 1 m in {plane_words(plane if plane is not None else figure_planes(ds)[0])} [dB re 20 µPa]: "
        f"{signal_label(signal)}, {words}",
        x=0.01,
        ha="left",
        fontsize=10,
        fontweight="bold",
    )
    return fig
