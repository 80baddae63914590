"""Curves over frequency: the power attenuation by the control sources and the level departure per sector."""

import numpy as np
from matplotlib.lines import Line2D
from matplotlib.patches import Patch
from matplotlib.ticker import FixedLocator, FormatStrFormatter, NullLocator

from bemcheck.case.model import Tolerance
from bemcheck.compare import CONTROLLED
from bemcheck.report import style
from bemcheck.report.signals import has_bem, has_controls

SECTOR_TICKS_DB = (0.0, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 60.0)


def attenuation_figure(ds):
    """Power attenuation against frequency: predicted (free field), as designed and re-optimised.

    Returns
    -------
    matplotlib.figure.Figure or None
        None when the layout has no control sources.
    """
    if not has_controls(ds):
        return None
    f = ds["frequency"].values
    fig = style.new_figure(9.0, 4.0)
    ax = fig.add_subplot()
    predicted = ds["attenuation_free_db"].values
    ax.plot(f, predicted, color=style.FREE, lw=1.8, marker="o", ms=3, label="predicted by the free-field model")
    if has_bem(ds):
        designed = ds["attenuation_as_designed_db"].values
        ax.fill_between(
            f,
            designed,
            predicted,
            where=predicted > designed,
            color=style.SCATTERED,
            alpha=0.15,
            lw=0,
            label="lost to scattering",
        )
        ax.plot(f, designed, color=style.SCATTERED, lw=1.6, marker="s", ms=3, label="as designed, scattering included")
        error = ds["attenuation_as_designed_error_db"].values
        ax.fill_between(
            f, designed - error, designed + error, color=style.SCATTERED, alpha=0.3, lw=0, label="± its numerical error"
        )
        ax.plot(
            f,
            ds["attenuation_reoptimised_db"].values,
            color=style.REOPTIMISED,
            lw=1.3,
            ls=(0, (5, 2)),
            label="re-optimised with scattering",
        )
        if bool(ds["attenuation_as_designed_limit_found"]):
            limit = float(ds["attenuation_as_designed_limit_hz"])
            ax.axvline(limit, color=style.INK, lw=0.9, ls=":")
            ax.annotate(
                "falls short",
                (limit, 1.0),
                xycoords=("data", "axes fraction"),
                xytext=(3, -10),
                textcoords="offset points",
                fontsize=7.5,
            )
    ax.axhline(0.0, color=style.MUTED, lw=0.8)
    style.frequency_axis(ax, f)
    ax.set_ylabel("attenuation of radiated power [dB]")
    ax.set_title("Power attenuation by the control sources")
    ax.legend(loc="best")
    return fig


def sector_figure(ds, tolerance_db=None):
    """RMS and largest |level departure| against frequency, one panel per sector, one colour per signal.

    Returns
    -------
    matplotlib.figure.Figure or None
        None for a free-field run.
    """
    if not has_bem(ds):
        return None
    tol = Tolerance().level_db if tolerance_db is None else float(tolerance_db)
    f = ds["frequency"].values
    sectors = [str(s) for s in ds["sector"].values]
    signals = [str(g) for g in ds["signal"].values]
    fig = style.new_figure(9.0, 1.2 + 2.4 * len(sectors))
    axes = fig.subplots(len(sectors), 1, sharex=True, squeeze=False)[:, 0]
    for ax, sector in zip(axes, sectors, strict=True):
        ax.axhspan(0.0, tol, color=style.TOLERANCE_FILL, lw=0)
        for g, signal in enumerate(signals):
            emphasis = signal == CONTROLLED
            colour = style.INK if emphasis else style.CYCLE[g % len(style.CYCLE)]
            lw = 2.0 if emphasis else 1.1
            rms = ds["diffraction_rms_db"].sel(sector=sector, signal=signal).values
            top = ds["diffraction_max_db"].sel(sector=sector, signal=signal).values
            ax.plot(f, rms, color=colour, lw=lw, label=signal)
            ax.plot(f, top, color=colour, lw=lw * 0.7, ls=(0, (4, 2)))
            unresolved = ds["not_resolved_fraction"].sel(sector=sector, signal=signal).values > 0
            if emphasis and unresolved.any():
                ax.plot(
                    f[unresolved],
                    np.zeros(unresolved.sum()),
                    ls="none",
                    marker="|",
                    ms=9,
                    color=style.MUTED,
                    clip_on=False,
                )
        style.frequency_axis(ax, f)
        ax.set_yscale("symlog", linthresh=1.0)
        ax.set_ylim(0.0, max(10.0, 1.2 * float(ds["diffraction_max_db"].sel(sector=sector).max())))
        ax.yaxis.set_major_locator(FixedLocator(SECTOR_TICKS_DB))
        ax.yaxis.set_major_formatter(FormatStrFormatter("%g"))
        ax.yaxis.set_minor_locator(NullLocator())
        ax.set_ylabel("|ΔL| [dB]")
        ax.set_title(f"sector '{sector}'{_plane_of(ds, sector)}", fontsize=9)
    for ax in axes[:-1]:
        ax.set_xlabel("")
    style_handles = [
        Line2D([], [], color=style.MUTED, lw=1.2, label="RMS over the sector"),
        Line2D([], [], color=style.MUTED, lw=1.0, ls=(0, (4, 2)), label="largest in the sector"),
        Patch(facecolor=style.TOLERANCE_FILL, label=f"within the tolerance ({tol:g} dB)"),
        Line2D([], [], color=style.MUTED, ls="none", marker="|", ms=9, label="mesh cannot tell (controlled)"),
    ]
    colour_handles = axes[0].get_legend_handles_labels()[0]
    fig.legend(handles=colour_handles + style_handles, loc="outside right upper", fontsize=7.5)
    fig.suptitle("Level departure per sector, BEM vs free field", x=0.01, ha="left", fontsize=10, fontweight="bold")
    return fig


def _plane_of(ds, sector):
    """The words " in <plane>" for a sector whose results name its far-field plane."""
    if "sector_plane" not in ds.coords:
        return ""
    plane = str(ds["sector_plane"].sel(sector=sector).values)
    return f" in {plane}" if plane else ""
