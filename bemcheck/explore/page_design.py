"""The explore page's sections on the case's own design: the power–directivity trade-off and the acoustic centres.

Each function takes the Dataset of ``explore.nc`` and returns HTML (figures
embedded as PNG) or an empty string when the variables are absent.
"""

from html import escape

import matplotlib as mpl
import numpy as np

from bemcheck.explore.variables import CENTRE_DESIGNS
from bemcheck.report.style import CYCLE, FREE, INK, REOPTIMISED, SCATTERED, new_figure, styled

_MODEL = {"free": "free field", "bem": "with scattering"}
_DESIGN = {
    "predicted": ("free-field prediction", FREE, "--"),
    "as_designed": ("as designed, with scattering", SCATTERED, "-"),
    "centred": ("designed with the acoustic centres, with scattering", CYCLE[3], "-"),
    "reoptimised": ("re-optimised with scattering", REOPTIMISED, ":"),
}


def tradeoff_figure(ds, png):
    """Fronts of (power attenuation, sector attenuation) per frequency in both models; the case's objective marked."""
    f = ds["frequency"].values
    norm = mpl.colors.LogNorm(vmin=f.min(), vmax=max(f.max(), f.min() * 1.001))
    cmap = mpl.colormaps["viridis"]
    with styled():
        fig = new_figure(8.0, 3.8)
        axes = fig.subplots(1, 2, sharex=True, sharey=True)
        for ax, model in zip(axes, ("free", "bem")):
            for i, fi in enumerate(f):
                p = ds["tradeoff_power_attenuation_db"].sel(model=model).values[i]
                s = ds["tradeoff_sector_attenuation_db"].sel(model=model).values[i]
                ax.plot(p, s, "-", color=cmap(norm(fi)), lw=1.2)
            ax.plot(
                ds["tradeoff_objective_power_attenuation_db"].sel(model=model).values,
                ds["tradeoff_objective_sector_attenuation_db"].sel(model=model).values,
                "o",
                ms=4,
                mfc="white",
                mec=INK,
                ls="none",
                label="the case's objective",
            )
            if model == "bem":
                ax.plot(
                    ds["tradeoff_as_designed_power_attenuation_db"].values,
                    ds["tradeoff_as_designed_sector_attenuation_db"].values,
                    "x",
                    ms=5,
                    color=SCATTERED,
                    ls="none",
                    label="free-field design, as built",
                )
            ax.set_title(_MODEL[model])
            ax.set_xlabel("power attenuation [dB]")
            ax.legend(fontsize=7, loc="lower left")
        axes[0].set_ylabel("sector attenuation [dB]")
        fig.colorbar(mpl.cm.ScalarMappable(norm=norm, cmap=cmap), ax=axes, label="frequency [Hz]", shrink=0.9)
        return png(fig)


def centres_figure(ds, png):
    """Offset of each acoustic centre and its fit residual against frequency; the designs' attenuation."""
    f = ds["frequency"].values
    with_designs = "centre_design_attenuation_db" in ds
    with styled():
        fig = new_figure(8.0, 3.4)
        axes = fig.subplots(1, 2 if with_designs else 1, squeeze=False)[0]
        for j, name in enumerate(ds["centred_source"].values):
            colour = CYCLE[j % len(CYCLE)]
            axes[0].semilogx(
                f,
                1e3 * ds["centre_offset"].sel(centred_source=name).values,
                "-o",
                ms=3,
                color=colour,
                label=f"{name} (residual {ds['centre_fit_residual'].sel(centred_source=name).values.max():.2f} at most)",
            )
        axes[0].set_xlabel("frequency [Hz]")
        axes[0].set_ylabel("acoustic centre from designed position [mm]")
        axes[0].legend(fontsize=7)
        if with_designs:
            for d in CENTRE_DESIGNS:
                label, colour, ls = _DESIGN[d]
                a = ds["centre_design_attenuation_db"].sel(centre_design=d).values
                e = ds["centre_design_attenuation_error_db"].sel(centre_design=d).values
                axes[1].semilogx(f, a, ls, color=colour, label=label)
                if np.any(e > 0):
                    axes[1].fill_between(f, a - e, a + e, color=colour, alpha=0.15, lw=0)
            axes[1].set_xlabel("frequency [Hz]")
            axes[1].set_ylabel("power attenuation [dB]")
            axes[1].legend(fontsize=7)
        return png(fig)


def design_sections(ds, png, img, table):
    """HTML of the trade-off and centre sections (``png``, ``img``, ``table``: the page's own helpers)."""
    parts = []
    if "tradeoff_power_attenuation_db" in ds:
        parts.append("<h2>Power against directivity, the case's controls</h2>")
        parts.append(
            f"<p>Sector: {escape(str(ds.attrs.get('tradeoff_sector', '')))}. Each curve is one frequency: "
            "the controls minimise (1 &minus; &alpha;)&middot;power + &alpha;&middot;sector mean-square pressure "
            "(each over its value without control) for &alpha; from 0 (right end: minimum power) to 1 "
            "(top: minimum sector pressure).</p>"
        )
        parts.append(img(tradeoff_figure(ds, png), "Trade-off fronts per frequency, free field and with scattering."))
    if "centre_position" in ds:
        parts.append("<h2>Acoustic centres of the sources on bodies</h2>")
        rows = [
            (
                "source",
                "designed [m]",
                "centre, lowest frequency [m]",
                "centre, highest frequency [m]",
                "largest fit residual",
            )
        ]
        for name in ds["centred_source"].values:
            c = ds["centre_position"].sel(centred_source=name).values
            rows.append(
                (
                    str(name),
                    str(ds["centre_designed_position"].sel(centred_source=name).values.round(3).tolist()),
                    str(c[0].round(3).tolist()),
                    str(c[-1].round(3).tolist()),
                    f"{float(ds['centre_fit_residual'].sel(centred_source=name).max()):.2f}",
                )
            )
        parts.append(table(rows))
        if "centre_recovered_db" in ds:
            rec, loss = ds["centre_recovered_db"].values, ds["centre_loss_db"].values
            i = int(np.argmax(loss))
            parts.append(
                f"<p>Largest as-designed loss {loss[i]:.1f} dB at {ds['frequency'].values[i]:.0f} Hz; designing "
                f"with the acoustic centres regains {rec[i]:.1f} dB of it there (the rest is diffraction by "
                "the bodies and what a monopole cannot reproduce).</p>"
            )
        parts.append(
            img(
                centres_figure(ds, png),
                "Acoustic centres against frequency, and the power attenuation of each design (band: numerical error).",
            )
        )
    return "".join(parts)
