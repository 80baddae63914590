"""The exploration's page: attenuation maps over the grid (free field and with scattering side by side) and the chosen layouts.

Figures are drawn in the run report's style (:mod:`bemcheck.report.style`)
and embedded in one self-contained HTML file.
"""

import base64
import io
from html import escape

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg

from bemcheck.case.explore import PLANES
from bemcheck.explore.page_design import design_sections
from bemcheck.explore.results import DESIGNS, MODELS
from bemcheck.report.html import CSS
from bemcheck.report.style import CYCLE, DPI, FREE, INK, SCATTERED, new_figure, styled
from bemcheck.results.files import atomic_write_bytes

PAGE_FILE = "explore.html"
_AXES = "xyz"
_MARK = {"chosen_free": ("o", FREE), "chosen_bem": ("x", SCATTERED)}
_NAME = {"free": "free field", "bem": "with scattering"}


def _png(fig):
    buf = io.BytesIO()
    FigureCanvasAgg(fig).print_figure(buf, format="png", dpi=DPI)
    return base64.b64encode(buf.getvalue()).decode()


def _grid_image(ds, values, shape):
    """(n_a, n_b) image of per-candidate ``values`` on the grid; NaN where a candidate was dropped."""
    img = np.full(shape, np.nan)
    ij = ds["candidate_grid_index"].values
    on = ij[:, 0] >= 0
    img[ij[on, 0], ij[on, 1]] = values[on]
    return img


def map_figure(ds, grid, values, title, outline):
    """Two maps side by side (free field, with scattering) of (model -> (M,) values) in dB, chosen layouts marked."""
    a, b = PLANES[grid.plane]
    shape = grid.counts()
    extent = [
        grid.origin[a] - grid.step / 2,
        grid.origin[a] + (shape[0] - 0.5) * grid.step,
        grid.origin[b] - grid.step / 2,
        grid.origin[b] + (shape[1] - 0.5) * grid.step,
    ]
    lo = min(np.nanmin(v) for v in values.values())
    hi = max(np.nanmax(v) for v in values.values())
    with styled():
        fig = new_figure(8.0, 3.6)
        axes = fig.subplots(1, 2, sharey=True)
        for ax, model in zip(axes, MODELS):
            img = _grid_image(ds, values[model], shape)
            im = ax.imshow(img.T, origin="lower", extent=extent, vmin=lo, vmax=hi, cmap="viridis", aspect="equal")
            if len(outline):
                ax.plot(outline[:, 0], outline[:, 1], ".", ms=1.5, color=INK, alpha=0.5)
            for design in DESIGNS:
                marker, colour = _MARK[design]
                pos = ds["chosen_position"].sel(design=design).values
                ax.plot(
                    pos[:, a],
                    pos[:, b],
                    marker,
                    color="white",
                    mec=colour,
                    mew=1.8,
                    ms=8,
                    ls="none",
                    label=f"chosen {_NAME[design.split('_')[1]]}",
                )
            ax.set_title("free field" if model == "free" else "with scattering")
            ax.set_xlabel(f"{_AXES[a]} [m]")
            ax.grid(False)
        axes[0].set_ylabel(f"{_AXES[b]} [m]")
        axes[1].legend(loc="upper right", fontsize=7)
        fig.colorbar(im, ax=axes, label="attenuation [dB]", shrink=0.9)
        fig.suptitle(title, x=0.02, ha="left", fontsize=10, fontweight="bold")
        return _png(fig)


def curves_figure(ds):
    """Attenuation against frequency of each chosen layout in both models, with its error band."""
    f = ds["frequency"].values
    with styled():
        fig = new_figure(7.0, 3.4)
        ax = fig.subplots()
        for i, design in enumerate(DESIGNS):
            for model, ls in zip(MODELS, ("--", "-")):
                a = ds["layout_attenuation_db"].sel(design=design, model=model).values
                e = ds["layout_attenuation_error_db"].sel(design=design, model=model).values
                colour = CYCLE[i]
                ax.semilogx(
                    f, a, ls, color=colour, label=f"chosen {_NAME[design.split('_')[1]]}, evaluated {_NAME[model]}"
                )
                if np.any(e > 0):
                    ax.fill_between(f, a - e, a + e, color=colour, alpha=0.15, lw=0)
        ax.set_xlabel("frequency [Hz]")
        ax.set_ylabel("power attenuation [dB]")
        ax.legend(fontsize=7)
        return _png(fig)


def _table(rows):
    head = "".join(f"<th>{escape(str(c))}</th>" for c in rows[0])
    body = "".join("<tr>" + "".join(f"<td>{escape(str(c))}</td>" for c in r) + "</tr>" for r in rows[1:])
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def _img(data, caption):
    return f'<figure><img src="data:image/png;base64,{data}" alt="{escape(caption)}"><figcaption>{escape(caption)}</figcaption></figure>'


def render_page(ds, grid, outline, lines):
    """The HTML text of the page.

    Parameters
    ----------
    ds : xarray.Dataset
        From :func:`bemcheck.explore.results.explore_dataset`.
    grid : Grid or None
        The explore grid (no maps without one).
    outline : (P, 2) ndarray
        Body surface points near the grid's plane, in its two axes [m].
    lines : sequence of str
        The summary lines printed by the command.
    """
    rows = [("design", "chosen positions [m]", "band average, free field [dB]", "band average, with scattering [dB]")]
    for design in DESIGNS:
        pos = ds["chosen_position"].sel(design=design).values.round(3).tolist()
        band = ds["layout_attenuation_band_db"].sel(design=design)
        rows.append(
            (
                f"chosen {_NAME[design.split('_')[1]]}",
                "; ".join(map(str, pos)),
                f"{float(band.sel(model='free')):.1f}",
                f"{float(band.sel(model='bem')):.1f}",
            )
        )
    parts = [
        "<ul>" + "".join(f"<li>{escape(line)}</li>" for line in lines) + "</ul>",
        _table(rows),
        _img(curves_figure(ds), "Power attenuation of each chosen layout in both models (band: numerical error)."),
    ]
    parts.append(design_sections(ds, _png, _img, _table))
    if grid is not None:
        band = {m: ds[f"single_control_attenuation_{m}_band_db"].values for m in MODELS}
        parts.append(
            _img(
                map_figure(ds, grid, band, "one control: band-averaged attenuation", outline),
                "Minimum power attenuation with one control at each grid point, averaged over the frequencies "
                "(blank: dropped candidates; dots: the bodies' mesh vertices near the plane).",
            )
        )
        for f in ds["frequency"].values:
            one = {m: ds[f"single_control_attenuation_{m}_db"].sel(frequency=f).values for m in MODELS}
            parts.append(
                _img(
                    map_figure(ds, grid, one, f"one control at {f:.0f} Hz", outline),
                    f"Minimum power attenuation with one control at each grid point, {f:.1f} Hz.",
                )
            )
    title = escape(str(ds.attrs.get("case_title", "exploration")))
    return (
        f'<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><title>bemcheck explore: {title}</title>'
        f"<style>{CSS}</style></head><body><header><h1>Where to put the controls</h1><p>{title}</p></header>"
        f"<main><section><h2>Summary</h2>{''.join(parts)}</section></main></body></html>\n"
    )


def write_page(path, ds, grid, outline, lines):
    """Write :func:`render_page` to ``path`` atomically."""
    atomic_write_bytes(path, render_page(ds, grid, outline, lines).encode())
    return path
