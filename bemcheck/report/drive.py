"""The volume velocity each control loudspeaker must give at the notes' harmonics, against what it can give."""

import numpy as np

from bemcheck.case.amplifiers import amplifier_of
from bemcheck.prebuild.amplifiers import volume_velocity_at_amplifier
from bemcheck.prebuild.drivers import excursion_limited_volume_velocity, volume_velocity_at_rated_power
from bemcheck.report import style

_NOTE_MARKERS = ("o", "s", "^", "D", "v", "P", "X")


def driven_controls(ds):
    """Indices of the control sources whose loudspeaker the before-build check knows."""
    if "q_available_excursion" not in ds.data_vars:
        return []
    avail = ds["q_available_excursion"].values
    return [j for j, r in enumerate(ds["role"].values) if r == "control" and (avail[:, j] > 0).any()]


def _available_curves(ds, case, j, grid):
    """(frequencies, Q within xmax, Q at rated power, Q from the amplifier channel or None) for source j:
    from its driver over ``grid`` when the case is at hand, else through the values stored at the harmonics
    (no amplifier curve then)."""
    source = case.sources[j] if case is not None and j < len(case.sources) else None
    driver = next((d for d in case.drivers if source is not None and d.name == source.driver), None) if case else None
    if driver is not None:
        amplifier = amplifier_of(case.amplifiers).get(source.name)
        return (
            grid,
            excursion_limited_volume_velocity(driver, grid),
            volume_velocity_at_rated_power(driver, grid, case.medium),
            None if amplifier is None else volume_velocity_at_amplifier(driver, amplifier, grid, case.medium),
        )
    f = ds["harmonic_frequency"].values
    order = np.argsort(f, kind="stable")
    stored = ds["q_available_excursion"].values[order, j], ds["q_available_rated_power"].values[order, j]
    return (f[order], *stored, None)


def volume_velocity_figure(ds, case=None):
    """Volume velocity each control loudspeaker must give at every harmonic, against what it can give.

    One panel per control source with a driver: the excursion limit
    Q_max = Sd·xmax·ω, the volume velocity at rated power (closed box,
    Small 1972) and, for a control fed by an ``[[amplifier]]``, the volume
    velocity at the channel's rated voltage or current, as curves over
    frequency, shaded above the lowest;
    the required |q| of every note's harmonics as designed (filled) and
    re-optimised with scattering (open), one marker shape per note.

    Parameters
    ----------
    ds : xarray.Dataset
        Results with the before-build variables (``q_required_designed``,
        ``q_available_excursion``, ...).
    case : Case, optional
        For the drivers' curves between harmonics; without it the
        available volume velocities are drawn through the harmonics only.

    Returns
    -------
    matplotlib.figure.Figure or None
        None when the run played no note or no control names a driver.
    """
    controls = driven_controls(ds)
    if not controls:
        return None
    f_h = ds["harmonic_frequency"].values
    notes = [str(n) for n in ds["harmonic_note"].values]
    numbers = ds["harmonic_number"].values
    designed = np.abs(ds["q_required_designed"].values)
    reopt = np.abs(ds["q_required_reoptimised"].values)
    grid = np.geomspace(f_h.min() / 1.5, f_h.max() * 1.5, 240)
    cols = 1 if len(controls) == 1 else 2
    rows = -(-len(controls) // cols)
    fig = style.new_figure(6.8 if cols == 1 else 10.0, 0.9 + 3.1 * rows)
    axes = fig.subplots(rows, cols, squeeze=False).ravel()
    for ax in axes[len(controls) :]:
        ax.set_visible(False)
    for ax, j in zip(axes, controls, strict=False):
        f_c, q_x, q_w, q_a = _available_curves(ds, case, j, grid)
        shown = [designed[:, j], reopt[:, j], q_x, q_w] + ([] if q_a is None else [q_a])
        top = 3.0 * max(float(np.max(v)) for v in shown)
        limit = np.minimum(q_x, q_w) if q_a is None else np.minimum(np.minimum(q_x, q_w), q_a)
        beyond = "beyond the loudspeaker" if q_a is None else "beyond the loudspeaker or its amplifier channel"
        ax.fill_between(f_c, limit, top, color=style.SCATTERED, alpha=0.10, lw=0, label=beyond)
        ax.plot(f_c, q_x, color=style.INK, lw=1.6, label="available within xmax (Sd·xmax·ω)")
        ax.plot(f_c, q_w, color=style.MUTED, lw=1.4, ls=(0, (5, 2)), label="available at rated power")
        if q_a is not None:
            ax.plot(f_c, q_a, color=style.INK, lw=1.2, ls=(0, (1, 1.5)), label="available from the amplifier channel")
        for k, note in enumerate(dict.fromkeys(notes)):
            sel = np.array([n == note for n in notes]) & (designed[:, j] > 0)
            marker = _NOTE_MARKERS[k % len(_NOTE_MARKERS)]
            ax.plot(
                f_h[sel],
                designed[sel, j],
                ls="none",
                marker=marker,
                ms=6,
                color=style.FREE,
                label=f"{note}: required as designed",
            )
            ax.plot(
                f_h[sel],
                reopt[sel, j],
                ls="none",
                marker=marker,
                ms=8,
                mfc="none",
                mew=1.3,
                color=style.REOPTIMISED,
                label=f"{note}: required re-optimised",
            )
            for x, y, h in zip(f_h[sel], designed[sel, j], numbers[sel], strict=True):
                ax.annotate(
                    f"h{int(h)}", (x, y), xytext=(5, -9), textcoords="offset points", fontsize=7, color=style.MUTED
                )
        ax.set_yscale("log")
        floor = min(float(np.min(v[v > 0])) for v in shown if (v > 0).any())
        ax.set_ylim(floor / 3.0, top)
        style.frequency_axis(ax, f_c)
        ax.set_xlim(f_c.min(), f_c.max())
        ax.set_ylabel("volume velocity, peak [m³/s]")
        driver = case.sources[j].driver if case is not None and j < len(case.sources) else None
        ax.set_title(f"{ds['source'].values[j]}" + (f" ({driver})" if driver else ""), fontsize=9)
    handles, labels = axes[0].get_legend_handles_labels()
    fig.legend(handles, labels, loc="outside lower center", ncol=min(len(labels), 3), fontsize=7.5)
    fig.suptitle(
        "Volume velocity per control loudspeaker: required at each harmonic against available",
        x=0.01,
        ha="left",
        fontsize=10,
        fontweight="bold",
    )
    return fig
