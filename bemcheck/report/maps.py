"""Departure maps over frequency and azimuth: level, phase, and the controlled system's attenuation shortfall."""

import numpy as np
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Rectangle

from bemcheck.case.model import Tolerance
from bemcheck.compare import CONTROLLED
from bemcheck.compare.trust import NOT_RESOLVED
from bemcheck.observers import in_sector
from bemcheck.report import style
from bemcheck.report.signals import figure_planes, has_bem, plane_directions, plane_words, signal_label


def _log_edges(f):
    """Cell edges between increasing frequencies, geometric midpoints; a sixth octave around a single one."""
    f = np.asarray(f, dtype=float)
    if f.size == 1:
        return f[0] * 2.0 ** np.array([-1 / 12, 1 / 12])
    mid = np.sqrt(f[1:] * f[:-1])
    return np.concatenate([[f[0] ** 2 / mid[0]], mid, [f[-1] ** 2 / mid[-1]]])


def _circular_edges(az):
    """Cell edges [deg] around increasing azimuths on a full circle; one cell spans 360."""
    if az.size == 1:
        return np.array([az[0] - 180.0, az[0] + 180.0])
    ext = np.concatenate([[az[-1] - 360.0], az, [az[0] + 360.0]])
    return 0.5 * (ext[1:] + ext[:-1])


# What a map can show: the values' variable, its tolerance's name in the case,
# the colour bar's label, whether the tolerance is one-sided, the title.
_MAPS = {
    "level": (
        "level_departure_db",
        "level_db",
        "20 log10 |p_BEM / p_free| [dB]",
        False,
        "Level departure, BEM vs free field",
    ),
    "phase": (
        "phase_departure_deg",
        "phase_deg",
        "phase of p_BEM / p_free [°]",
        False,
        "Phase departure, BEM vs free field",
    ),
    "shortfall": (
        None,
        "attenuation_db",
        "min(predicted, target) − attenuation as designed [dB]",
        True,
        "Attenuation shortfall of the free-field design, scattering included",
    ),
}


def _map_values(ds, quantity, signal, tolerance):
    """(values (F, D), one-sided) of a map; the shortfall is the controlled system's."""
    name = _MAPS[quantity][0]
    if name is not None:
        return ds[name].sel(signal=signal).values
    return (
        np.minimum(ds["directional_attenuation_predicted_db"].values, tolerance.attenuation_target_db)
        - ds["directional_attenuation_as_designed_db"].values
    )


def departure_map_figure(ds, signal=CONTROLLED, tolerance=None, sectors=(), quantity="level", plane=None):
    """A departure over frequency and azimuth, with the tolerance contour and the masks.

    Parameters
    ----------
    ds : xarray.Dataset
        Results of a run holding both models.
    signal : str
        A source name or ``"controlled"``.
    tolerance : Tolerance, optional
        The case's tolerances; default :class:`~bemcheck.case.model.Tolerance`.
    sectors : sequence of Sector, optional
        The case's tolerance sectors; each one's trust limit is marked
        across its azimuths.
    quantity : {"level", "phase", "shortfall"}
        Level [dB] or phase [°] departure of a signal's field, or the
        controlled system's attenuation shortfall [dB] (what the verdict judges).
    plane : str, optional
        The label of the far-field plane drawn (default the first); only
        the sectors in it are marked.

    Returns
    -------
    matplotlib.figure.Figure or None
        None for a free-field run or when no direction lies near the plane.
    """
    idx = plane_directions(ds, plane)
    if not has_bem(ds) or idx.size == 0:
        return None
    tolerance = Tolerance() if tolerance is None else tolerance
    _, tol_key, bar_label, one_sided, title = _MAPS[quantity]
    tol = float(getattr(tolerance, tol_key))
    unit = "°" if quantity == "phase" else " dB"
    f = ds["frequency"].values
    az = ds["azimuth_deg"].values[idx] % 360.0
    level = _map_values(ds, quantity, signal, tolerance)[:, idx]
    judged = ds["significant"].sel(signal=signal).values[:, idx]
    unresolved = (ds["status"].sel(signal=signal).values[:, idx] == NOT_RESOLVED) & judged
    shown = np.ma.masked_where(~judged, level)
    if quantity == "phase":
        norm, clipped = style.departure_norm(level[judged], tol, ceiling=180.0, unit="°")
    else:
        norm, clipped = style.departure_norm(level[judged], tol)

    fig = style.new_figure(9.0, 5.0)
    ax = fig.add_subplot()
    x_edges, y_edges = _log_edges(f), _circular_edges(az)
    mesh = ax.pcolormesh(x_edges, y_edges, shown.T, cmap=style.DEPARTURE_CMAP, norm=norm, shading="flat")
    for i, j0, j1 in _runs(unresolved):
        ax.add_patch(
            Rectangle(
                (x_edges[i], y_edges[j0]),
                x_edges[i + 1] - x_edges[i],
                y_edges[j1] - y_edges[j0],
                fill=False,
                hatch="////",
                edgecolor=style.INK,
                linewidth=0.0,
            )
        )
    # Contours on the cell centres, with the circle closed on both sides.
    yy = np.concatenate([[az[-1] - 360.0], az, [az[0] + 360.0]])
    zz = np.ma.concatenate([shown[:, -1:], shown, shown[:, :1]], axis=1)
    levels, styles = ([tol], ["-"]) if one_sided else ([-tol, tol], ["--", "-"])
    if f.size > 1 and judged.any():
        ax.contour(f, yy, zz.T, levels=levels, colors=[style.INK], linewidths=1.0, linestyles=styles)
    first = figure_planes(ds)[0]
    shown_plane = plane if plane is not None else first
    _trust_marks(ax, ds, signal, y_edges, [s for s in sectors if (s.plane or first) == shown_plane])
    style.frequency_axis(ax, f)
    ax.set_xlim(x_edges[0], x_edges[-1])
    ax.set_ylim(y_edges[0], y_edges[-1])
    ax.set_yticks(np.arange(0.0, 361.0, 45.0))
    ax.grid(False)
    ax.set_ylabel(f"azimuth in {plane_words(shown_plane)} [°]")
    ax.set_title(f"{title}: {signal_label(signal)}, {plane_words(shown_plane)}")
    bar = fig.colorbar(mesh, ax=ax, extend="both" if clipped else "neither", pad=0.01)
    bar.set_ticks(style.departure_ticks(norm.vmax, tol))
    bar.ax.yaxis.set_major_formatter("{x:g}")
    bar.set_label(bar_label + (f"\n{clipped}" if clipped else ""))
    contour = (
        f"+{tol:g}{unit}: falls short beyond the tolerated shortfall"
        if one_sided
        else f"+{tol:g}{unit} (solid), −{tol:g}{unit} (dashed)"
    )
    handles = [
        Line2D([], [], color=style.INK, lw=1.0, label=contour),
        Patch(facecolor=style.NULL_GREY, label="null in both models (not judged)"),
        Patch(facecolor="white", edgecolor=style.INK, hatch="////", label="mesh cannot tell (not resolved)"),
        Line2D([], [], color=style.INK, lw=3.0, solid_capstyle="butt", label="trust limit of a sector"),
    ]
    fig.legend(handles=handles, loc="outside lower center", ncol=2 if one_sided else 4, fontsize=7.5)
    return fig


def _runs(mask):
    """(column, start, stop) of contiguous True runs along axis 1 of a 2-D mask."""
    out = []
    for i, row in enumerate(mask):
        d = np.diff(np.concatenate([[0], row.astype(int), [0]]))
        out.extend((i, int(a), int(b)) for a, b in zip(np.nonzero(d == 1)[0], np.nonzero(d == -1)[0], strict=True))
    return out


def _trust_marks(ax, ds, signal, y_edges, sectors):
    """A thick vertical bar at each sector's trust limit, spanning the sector's azimuths."""
    centres = 0.5 * (y_edges[1:] + y_edges[:-1])
    for sector in sectors:
        if sector.name not in ds["sector"].values:
            continue
        at = {"sector": sector.name, "signal": signal}
        if not bool(ds["trust_limit_found"].sel(at)):
            continue
        x = float(ds["trust_limit_hz"].sel(at))
        inside = in_sector(centres, sector.from_deg, sector.to_deg)
        for _, j0, j1 in _runs(inside[None, :]):
            ax.plot([x, x], [y_edges[j0], y_edges[j1]], color=style.INK, lw=3.0, solid_capstyle="butt")
            ax.annotate(
                sector.name,
                (x, 0.5 * (y_edges[j0] + y_edges[j1])),
                xytext=(4, 0),
                textcoords="offset points",
                fontsize=7,
                color=style.INK,
                va="center",
                rotation=90,
            )
