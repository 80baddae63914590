"""The look of bemcheck's figures: one palette, one set of matplotlib settings, one way to save.

Figures are built on :class:`matplotlib.figure.Figure` with an explicit Agg
canvas, so no global backend is chosen and pyplot's figure registry is never
touched (safe in worker processes and in tests).
"""

import io
import re

import numpy as np
from matplotlib import rc_context
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.backends.backend_svg import FigureCanvasSVG
from matplotlib.colors import LinearSegmentedColormap, SymLogNorm
from matplotlib.figure import Figure
from matplotlib.ticker import FixedLocator, FormatStrFormatter, NullFormatter

from bemcheck.results.files import atomic_write_bytes

INK = "#1e2b35"
MUTED = "#6b7680"
GRID = "#d9dee2"
NULL_GREY = "#c4c7ca"
FREE = "#2f6f8f"  # the free-field monopole model
SCATTERED = "#b4532f"  # the BEM, scattering included, strengths as designed
REOPTIMISED = "#5b7f3a"  # the BEM with strengths re-optimised
TOLERANCE_FILL = "#e6efe0"
# Qualitative colours for per-signal and per-body lines, in this order.
CYCLE = ("#2f6f8f", "#b4532f", "#5b7f3a", "#7d5a94", "#c28f2c", "#3f8c8a", "#9c4a6b", "#5c6770")

# Diverging map for level departures: deep teal (scattered quieter) through
# warm paper (agreement) to rust (scattered louder).
DEPARTURE_CMAP = LinearSegmentedColormap.from_list(
    "bemcheck_departure", ["#0f4650", "#4f9aa0", "#f4f0e6", "#dc9a5e", "#7e2a18"]
).with_extremes(bad=NULL_GREY)

# The departure map's colour scale reaches the largest departure judged, but
# not beyond this [dB]; past it the colour bar says where it clips (common
# practice, no source: beyond 60 dB a ratio of two fields is a null of one).
MAP_CEILING_DB = 60.0

RC = {
    "font.family": "DejaVu Sans",
    "font.size": 9.0,
    "axes.titlesize": 10.0,
    "axes.titleweight": "bold",
    "axes.titlelocation": "left",
    "axes.labelcolor": INK,
    "axes.edgecolor": MUTED,
    "axes.linewidth": 0.8,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.color": GRID,
    "grid.linewidth": 0.6,
    "xtick.color": MUTED,
    "ytick.color": MUTED,
    "xtick.labelcolor": INK,
    "ytick.labelcolor": INK,
    "text.color": INK,
    "legend.frameon": False,
    "legend.fontsize": 8.0,
    "hatch.linewidth": 0.7,
    "svg.fonttype": "none",
    "figure.facecolor": "white",
    "savefig.facecolor": "white",
}
DPI = 110
FORMATS = ("png", "svg")
_CANVAS = {"png": FigureCanvasAgg, "svg": FigureCanvasSVG}


def new_figure(width_in, height_in, **kw):
    """A figure in bemcheck's style, drawn with Agg; call inside :func:`styled`."""
    fig = Figure(figsize=(width_in, height_in), dpi=DPI, layout="constrained", **kw)
    FigureCanvasAgg(fig)
    return fig


def styled():
    """Context manager applying :data:`RC` to figures made and saved inside it."""
    return rc_context(RC)


def file_stem(name):
    """A file-name-safe version of ``name`` (source names come from the case file).

    Examples
    --------
    >>> file_stem("polar controlled/L 1")
    'polar_controlled_L_1'
    """
    return re.sub(r"[^A-Za-z0-9_.-]+", "_", name).strip("._") or "figure"


def save(fig, out_dir, name, formats=FORMATS):
    """Write ``fig`` as ``out_dir/name.<fmt>`` for each format, atomically.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    out_dir : pathlib.Path
        Existing folder.
    name : str
        File stem (already safe, see :func:`file_stem`).
    formats : sequence of {"png", "svg"}

    Returns
    -------
    pathlib.Path
        The file of the first format.
    """
    paths = []
    for fmt in formats:
        buf = io.BytesIO()
        _CANVAS[fmt](fig).print_figure(buf, format=fmt, dpi=DPI)
        path = out_dir / f"{name}.{fmt}"
        atomic_write_bytes(path, buf.getvalue())
        paths.append(path)
    return paths[0]


def departure_norm(values, tol, ceiling=None, unit="dB"):
    """Colour scale for level departures: linear within the tolerance, logarithmic beyond, symmetric.

    It reaches the largest |departure| of ``values`` (rounded up to a
    whole dB), so that every departure has its own shade while those near
    the tolerance keep theirs; beyond :data:`MAP_CEILING_DB` it clips.

    Parameters
    ----------
    values : ndarray
        Departures judged [dB].
    tol : float
        Tolerance, in the values' unit.
    ceiling : float, optional
        Where the scale clips; default :data:`MAP_CEILING_DB` (for values in dB).
    unit : str
        The values' unit, for the words.

    Returns
    -------
    (matplotlib.colors.SymLogNorm, str)
        The scale and, when it clips, the words saying so ("" otherwise).

    Examples
    --------
    >>> norm, clipped = departure_norm(np.array([-0.4, 2.0, 27.3]), 1.0)
    >>> norm.vmax, clipped
    (28.0, '')
    """
    ceiling = MAP_CEILING_DB if ceiling is None else ceiling
    largest = float(np.abs(values).max()) if np.size(values) else tol
    vmax = float(np.ceil(max(largest, 3.0 * tol)))
    clipped = ""
    if vmax > ceiling:
        vmax = ceiling
        clipped = f"colours clipped at ±{vmax:g} {unit} (largest |departure| {largest:.0f} {unit})"
    return SymLogNorm(linthresh=tol, linscale=1.0, vmin=-vmax, vmax=vmax, base=10), clipped


def departure_ticks(vmax, tol):
    """Colour-bar ticks [dB]: 0, ± the tolerance, ± a 1-3-10 series and ± the scale's end.

    Examples
    --------
    >>> departure_ticks(28.0, 1.0)
    [-28.0, -10.0, -3.0, -1.0, 0.0, 1.0, 3.0, 10.0, 28.0]
    """
    series = [v for v in (1.0, 3.0, 10.0, 30.0) if 1.5 * tol <= v < 0.8 * vmax]
    pos = sorted({tol, *series, vmax})
    return [-v for v in reversed(pos)] + [0.0] + pos


def frequency_axis(ax, f):
    """Log frequency axis with plain-number ticks on a 1-2-5 series."""
    ax.set_xscale("log")
    decades = 10.0 ** np.arange(np.floor(np.log10(f.min())) - 1, np.ceil(np.log10(f.max())) + 1)
    ticks = np.outer(decades, [1.0, 2.0, 5.0]).ravel()
    ax.xaxis.set_major_locator(FixedLocator(ticks))
    ax.xaxis.set_major_formatter(FormatStrFormatter("%g"))
    ax.xaxis.set_minor_formatter(NullFormatter())
    ax.set_xlabel("frequency [Hz]")
