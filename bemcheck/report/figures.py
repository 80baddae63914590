"""The figures of one run, drawn from its results Dataset.

Each ``*_figure`` function returns a :class:`matplotlib.figure.Figure` (or
None when the run holds nothing to draw); :func:`make_figures` draws them
all and writes PNG and SVG files.
"""

from pathlib import Path

import numpy as np
from matplotlib.lines import Line2D
from matplotlib.patches import Patch, Rectangle
from matplotlib.ticker import FixedLocator, FormatStrFormatter, NullFormatter, NullLocator

from bemcheck.case.model import Tolerance
from bemcheck.compare import CONTROLLED
from bemcheck.compare.trust import NOT_RESOLVED
from bemcheck.observers import in_sector
from bemcheck.prebuild.drivers import excursion_limited_volume_velocity, volume_velocity_at_rated_power
from bemcheck.report import style
from bemcheck.report.layout import layout_figure
from bemcheck.report.polar import polar_figure
from bemcheck.report.signals import (
    case_of,
    default_signal,
    has_bem,
    has_controls,
    plane_directions,
    polar_frequencies,
    primary_q_of,
    signal_label,
)

SECTOR_TICKS_DB = (0.0, 0.5, 1.0, 2.0, 5.0, 10.0, 20.0, 60.0)


def _frequency_axis(ax, f):
    """Log frequency axis with plain-number ticks on a 1-2-5 series."""
    ax.set_xscale("log")
    decades = 10.0 ** np.arange(np.floor(np.log10(f.min())) - 1, np.ceil(np.log10(f.max())) + 1)
    ticks = np.outer(decades, [1.0, 2.0, 5.0]).ravel()
    ax.xaxis.set_major_locator(FixedLocator(ticks))
    ax.xaxis.set_major_formatter(FormatStrFormatter("%g"))
    ax.xaxis.set_minor_formatter(NullFormatter())
    ax.set_xlabel("frequency [Hz]")


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
    "level": ("level_departure_db", "level_db", "20 log10 |p_BEM / p_free| [dB]", False,
              "Level departure, BEM vs free field"),
    "phase": ("phase_departure_deg", "phase_deg", "phase of p_BEM / p_free [°]", False,
              "Phase departure, BEM vs free field"),
    "shortfall": (None, "attenuation_db", "min(predicted, target) − attenuation as designed [dB]", True,
                  "Attenuation shortfall of the free-field design, scattering included"),
}


def _map_values(ds, quantity, signal, tolerance):
    """(values (F, D), one-sided) of a map; the shortfall is the controlled system's."""
    name = _MAPS[quantity][0]
    if name is not None:
        return ds[name].sel(signal=signal).values
    return (np.minimum(ds["directional_attenuation_predicted_db"].values, tolerance.attenuation_target_db)
            - ds["directional_attenuation_as_designed_db"].values)


def departure_map_figure(ds, signal=CONTROLLED, tolerance=None, sectors=(), quantity="level"):
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

    Returns
    -------
    matplotlib.figure.Figure or None
        None for a free-field run or when no direction lies near the plane.
    """
    idx = plane_directions(ds)
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
        ax.add_patch(Rectangle((x_edges[i], y_edges[j0]), x_edges[i + 1] - x_edges[i], y_edges[j1] - y_edges[j0],
                               fill=False, hatch="////", edgecolor=style.INK, linewidth=0.0))
    # Contours on the cell centres, with the circle closed on both sides.
    yy = np.concatenate([[az[-1] - 360.0], az, [az[0] + 360.0]])
    zz = np.ma.concatenate([shown[:, -1:], shown, shown[:, :1]], axis=1)
    levels, styles = ([tol], ["-"]) if one_sided else ([-tol, tol], ["--", "-"])
    if f.size > 1 and judged.any():
        ax.contour(f, yy, zz.T, levels=levels, colors=[style.INK], linewidths=1.0, linestyles=styles)
    _trust_marks(ax, ds, signal, y_edges, sectors)
    _frequency_axis(ax, f)
    ax.set_xlim(x_edges[0], x_edges[-1])
    ax.set_ylim(y_edges[0], y_edges[-1])
    ax.set_yticks(np.arange(0.0, 361.0, 45.0))
    ax.grid(False)
    ax.set_ylabel("azimuth in the observers' plane [°]")
    ax.set_title(f"{title}: {signal_label(signal)}")
    bar = fig.colorbar(mesh, ax=ax, extend="both" if clipped else "neither", pad=0.01)
    bar.set_ticks(style.departure_ticks(norm.vmax, tol))
    bar.ax.yaxis.set_major_formatter("{x:g}")
    bar.set_label(bar_label + (f"\n{clipped}" if clipped else ""))
    contour = (f"+{tol:g}{unit}: falls short beyond the tolerated shortfall" if one_sided
               else f"+{tol:g}{unit} (solid), −{tol:g}{unit} (dashed)")
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
        out.extend((i, int(a), int(b)) for a, b in zip(np.nonzero(d == 1)[0], np.nonzero(d == -1)[0]))
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
            ax.annotate(sector.name, (x, 0.5 * (y_edges[j0] + y_edges[j1])), xytext=(4, 0), textcoords="offset points",
                        fontsize=7, color=style.INK, va="center", rotation=90)


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
        ax.fill_between(f, designed, predicted, where=predicted > designed, color=style.SCATTERED, alpha=0.15,
                        lw=0, label="lost to scattering")
        ax.plot(f, designed, color=style.SCATTERED, lw=1.6, marker="s", ms=3, label="as designed, scattering included")
        error = ds["attenuation_as_designed_error_db"].values
        ax.fill_between(f, designed - error, designed + error, color=style.SCATTERED, alpha=0.3, lw=0,
                        label="± its numerical error")
        ax.plot(f, ds["attenuation_reoptimised_db"].values, color=style.REOPTIMISED, lw=1.3, ls=(0, (5, 2)),
                label="re-optimised with scattering")
        if bool(ds["attenuation_as_designed_limit_found"]):
            limit = float(ds["attenuation_as_designed_limit_hz"])
            ax.axvline(limit, color=style.INK, lw=0.9, ls=":")
            ax.annotate("falls short", (limit, 1.0), xycoords=("data", "axes fraction"), xytext=(3, -10),
                        textcoords="offset points", fontsize=7.5)
    ax.axhline(0.0, color=style.MUTED, lw=0.8)
    _frequency_axis(ax, f)
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
    for ax, sector in zip(axes, sectors):
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
                ax.plot(f[unresolved], np.zeros(unresolved.sum()), ls="none", marker="|", ms=9, color=style.MUTED,
                        clip_on=False)
        _frequency_axis(ax, f)
        ax.set_yscale("symlog", linthresh=1.0)
        ax.set_ylim(0.0, max(10.0, 1.2 * float(ds["diffraction_max_db"].sel(sector=sector).max())))
        ax.yaxis.set_major_locator(FixedLocator(SECTOR_TICKS_DB))
        ax.yaxis.set_major_formatter(FormatStrFormatter("%g"))
        ax.yaxis.set_minor_locator(NullLocator())
        ax.set_ylabel("|ΔL| [dB]")
        ax.set_title(f"sector '{sector}'", fontsize=9)
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


_NOTE_MARKERS = ("o", "s", "^", "D", "v", "P", "X")


def _driven_controls(ds):
    """Indices of the control sources whose loudspeaker the before-build check knows."""
    if "q_available_excursion" not in ds.data_vars:
        return []
    avail = ds["q_available_excursion"].values
    return [j for j, r in enumerate(ds["role"].values) if r == "control" and (avail[:, j] > 0).any()]


def _available_curves(ds, case, j, grid):
    """(frequencies, Q within xmax, Q at rated power) for source j: from its driver over ``grid``
    when the case is at hand, else through the values stored at the harmonics."""
    source = case.sources[j] if case is not None and j < len(case.sources) else None
    driver = next((d for d in case.drivers if source is not None and d.name == source.driver), None) if case else None
    if driver is not None:
        return (grid, excursion_limited_volume_velocity(driver, grid),
                volume_velocity_at_rated_power(driver, grid, case.medium))
    f = ds["harmonic_frequency"].values
    order = np.argsort(f, kind="stable")
    return (f[order], ds["q_available_excursion"].values[order, j], ds["q_available_rated_power"].values[order, j])


def volume_velocity_figure(ds, case=None):
    """Volume velocity each control loudspeaker must give at every harmonic, against what it can give.

    One panel per control source with a driver: the excursion limit
    Q_max = Sd·xmax·ω and the volume velocity at rated power (closed box,
    Small 1972) as curves over frequency, shaded above the lower of the two;
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
    controls = _driven_controls(ds)
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
    for ax in axes[len(controls):]:
        ax.set_visible(False)
    for ax, j in zip(axes, controls):
        f_c, q_x, q_w = _available_curves(ds, case, j, grid)
        shown = [designed[:, j], reopt[:, j], q_x, q_w]
        top = 3.0 * max(float(np.max(v)) for v in shown)
        ax.fill_between(f_c, np.minimum(q_x, q_w), top, color=style.SCATTERED, alpha=0.10, lw=0,
                        label="beyond the loudspeaker")
        ax.plot(f_c, q_x, color=style.INK, lw=1.6, label="available within xmax (Sd·xmax·ω)")
        ax.plot(f_c, q_w, color=style.MUTED, lw=1.4, ls=(0, (5, 2)), label="available at rated power")
        for k, note in enumerate(dict.fromkeys(notes)):
            sel = np.array([n == note for n in notes]) & (designed[:, j] > 0)
            marker = _NOTE_MARKERS[k % len(_NOTE_MARKERS)]
            ax.plot(f_h[sel], designed[sel, j], ls="none", marker=marker, ms=6, color=style.FREE,
                    label=f"{note}: required as designed")
            ax.plot(f_h[sel], reopt[sel, j], ls="none", marker=marker, ms=8, mfc="none", mew=1.3,
                    color=style.REOPTIMISED, label=f"{note}: required re-optimised")
            for x, y, h in zip(f_h[sel], designed[sel, j], numbers[sel]):
                ax.annotate(f"h{int(h)}", (x, y), xytext=(5, -9), textcoords="offset points", fontsize=7,
                            color=style.MUTED)
        ax.set_yscale("log")
        floor = min(float(np.min(v[v > 0])) for v in shown if (v > 0).any())
        ax.set_ylim(floor / 3.0, top)
        _frequency_axis(ax, f_c)
        ax.set_xlim(f_c.min(), f_c.max())
        ax.set_ylabel("volume velocity, peak [m³/s]")
        driver = case.sources[j].driver if case is not None and j < len(case.sources) else None
        ax.set_title(f"{ds['source'].values[j]}" + (f" ({driver})" if driver else ""), fontsize=9)
    handles, labels = axes[0].get_legend_handles_labels()
    fig.legend(handles, labels, loc="outside lower center", ncol=min(len(labels), 3), fontsize=7.5)
    fig.suptitle("Volume velocity per control loudspeaker: required at each harmonic against available",
                 x=0.01, ha="left", fontsize=10, fontweight="bold")
    return fig


def make_figures(ds, out_dir, *, case=None, mesh=None, signals=None, frequencies=None, tolerance_db=None,
                 formats=style.FORMATS):
    """Draw every figure a run supports and write them to ``out_dir``.

    Parameters
    ----------
    ds : xarray.Dataset
        Results of a run (free-field only or both models); see
        :mod:`bemcheck.results.dataset`.
    out_dir : str or Path
        Folder for the files; created if needed.
    case : Case, optional
        The run's case; default re-read from ``ds.attrs["case_text"]``.  Gives
        primary strengths (controlled-field polars), sector bounds and
        source/observer positions (layout).
    mesh : SurfaceMesh, optional
        Bodies to draw in the layout figure; no layout figure without it.
    signals : sequence of str, optional
        Signals for the departure maps; default the controlled system and
        each primary.
    frequencies : sequence of float, optional
        Frequencies for the polar plots [Hz]; default a few spread over the
        band, one near the trust limit.
    tolerance_db : float, optional
        Level tolerance [dB]; default the case's.
    formats : sequence of {"png", "svg"}
        The first one is returned.

    Returns
    -------
    dict[str, Path]
        Figure name -> file of the first format; the other formats sit beside
        it with the same stem.  Names: ``departure_map_<signal>``,
        ``polar_<signal>``, ``attenuation``, ``departure_by_sector``, ``layout``,
        ``volume_velocity`` (before build).

    Examples
    --------
    >>> import bemcheck, tempfile
    >>> run = bemcheck.run_case(bemcheck.load_case(bemcheck.example_path("free-pair")), tempfile.mkdtemp(), model="free")
    >>> sorted(make_figures(bemcheck.load_results(run.folder), run.folder / "figures"))
    ['attenuation', 'polar_controlled']
    """
    unknown = [f for f in formats if f not in style.FORMATS]
    if unknown or not formats:
        raise ValueError(f"formats: expected some of {', '.join(style.FORMATS)}, got {list(formats)}")
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    if case is None:
        case, _ = case_of(ds)
    if tolerance_db is None and case is not None:
        tolerance_db = case.tolerance.level_db
    primary_q = primary_q_of(case)
    focus = default_signal(ds)
    if focus == CONTROLLED and primary_q is None:
        focus = str(ds["source"].values[list(ds["role"].values).index("primary")])
    if signals is None:
        primaries = [str(s) for s, r in zip(ds["source"].values, ds["role"].values) if r == "primary"]
        signals = ([CONTROLLED] if has_controls(ds) else []) + primaries
    known = [str(g) for g in ds["signal"].values] if has_bem(ds) else []
    if has_bem(ds) and any(g not in known for g in signals):
        raise ValueError(f"signals: expected names among {', '.join(known)}, got {list(signals)}")
    if frequencies is None:
        frequencies = polar_frequencies(ds, focus)
    sectors = case.tolerance.sectors if case is not None else ()
    drawers = {"layout": lambda: layout_figure(mesh, case) if mesh is not None else None}
    tolerance = case.tolerance if case is not None else Tolerance(level_db=tolerance_db or Tolerance.level_db)
    for g in signals:
        if g == CONTROLLED:
            drawers["shortfall_map"] = lambda: departure_map_figure(ds, CONTROLLED, tolerance, sectors, "shortfall")
        else:
            drawers[f"departure_map_{g}"] = lambda g=g: departure_map_figure(ds, g, tolerance, sectors, "level")
            drawers[f"phase_map_{g}"] = lambda g=g: departure_map_figure(ds, g, tolerance, sectors, "phase")
    drawers["departure_by_sector"] = lambda: sector_figure(ds, tolerance_db)
    drawers[f"polar_{focus}"] = lambda: polar_figure(ds, focus, frequencies, primary_q)
    drawers["attenuation"] = lambda: attenuation_figure(ds)
    drawers["volume_velocity"] = lambda: volume_velocity_figure(ds, case)
    written = {}
    with style.styled():
        for name, draw in drawers.items():
            fig = draw()
            if fig is not None:
                written[name] = style.save(fig, out, style.file_stem(name), formats)
    return written
