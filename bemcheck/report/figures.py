"""The figures of one run, drawn from its results Dataset as the registry declares them.

:mod:`bemcheck.report.registry` lists every figure (name, drawer, caption,
needs); :func:`draw_figures` draws those a run supports and writes PNG and
SVG files; :func:`make_figures` is the same as a name -> file mapping.  The
drawers live by kind: :mod:`~bemcheck.report.maps` (departure maps),
:mod:`~bemcheck.report.curves` (attenuation, departure per sector),
:mod:`~bemcheck.report.polar`, :mod:`~bemcheck.report.layout` and
:mod:`~bemcheck.report.drive` (volume velocity per control loudspeaker);
they are importable from here too.
"""

from dataclasses import dataclass
from pathlib import Path

from bemcheck.case.model import Tolerance
from bemcheck.compare import CONTROLLED
from bemcheck.report import registry, style
from bemcheck.report.curves import attenuation_figure, sector_figure
from bemcheck.report.drive import volume_velocity_figure
from bemcheck.report.maps import departure_map_figure
from bemcheck.report.polar import polar_figure
from bemcheck.report.signals import case_of, default_signal, has_bem, has_controls, polar_frequencies, primary_q_of

__all__ = [
    "DrawnFigure",
    "attenuation_figure",
    "departure_map_figure",
    "draw_figures",
    "figure_inputs",
    "make_figures",
    "polar_figure",
    "sector_figure",
    "volume_velocity_figure",
]


@dataclass(frozen=True)
class DrawnFigure:
    """A figure written to disk: its file name stem, declaration, file (of the first format) and far-field plane.

    ``plane`` is None for a figure that is not drawn per plane.
    """

    name: str
    spec: registry.FigureSpec
    path: Path
    plane: str | None = None


def _check_formats(formats):
    unknown = [f for f in formats if f not in style.FORMATS]
    if unknown or not formats:
        raise ValueError(f"formats: expected some of {', '.join(style.FORMATS)}, got {list(formats)}")


def figure_inputs(ds, *, case=None, mesh=None, signals=None, frequencies=None, tolerance_db=None):
    """What the drawers need, with the defaults filled in (see :func:`make_figures` for the parameters).

    Returns
    -------
    FigureInputs

    Raises
    ------
    ValueError
        A signal the results do not hold.
    """
    if case is None:
        case, _ = case_of(ds)
    if tolerance_db is None and case is not None:
        tolerance_db = case.tolerance.level_db
    primary_q = primary_q_of(case)
    focus = default_signal(ds)
    if focus == CONTROLLED and primary_q is None:
        focus = str(ds["source"].values[list(ds["role"].values).index("primary")])
    if signals is None:
        primaries = [str(s) for s, r in zip(ds["source"].values, ds["role"].values, strict=True) if r == "primary"]
        signals = ([CONTROLLED] if has_controls(ds) else []) + primaries
    known = [str(g) for g in ds["signal"].values] if has_bem(ds) else []
    if has_bem(ds) and any(g not in known for g in signals):
        raise ValueError(f"signals: expected names among {', '.join(known)}, got {list(signals)}")
    if frequencies is None:
        frequencies = polar_frequencies(ds, focus)
    tolerance = (
        case.tolerance if case is not None else Tolerance(level_db=tolerance_db or Tolerance.level_db, sectors=())
    )
    return registry.FigureInputs(
        ds, case, mesh, tolerance, tolerance_db, tuple(signals), focus, tuple(frequencies), primary_q
    )


def draw_figures(inputs, out_dir, formats=style.FORMATS):
    """Draw every registered figure that ``inputs`` supports and write it to ``out_dir``.

    Returns
    -------
    list of DrawnFigure
        In the registry's order; a drawer that returns None leaves no entry.
    """
    _check_formats(formats)
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    drawn = []
    with style.styled():
        for name, spec, signal, plane in registry.planned(inputs):
            fig = spec.draw(registry.on_plane(inputs, plane), signal)
            if fig is not None:
                drawn.append(DrawnFigure(name, spec, style.save(fig, out, style.file_stem(name), formats), plane))
    return drawn


def make_figures(
    ds, out_dir, *, case=None, mesh=None, signals=None, frequencies=None, tolerance_db=None, formats=style.FORMATS
):
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
        it with the same stem.  Names: those of
        :data:`bemcheck.report.registry.FIGURES`, a signal's name appended
        for the per-signal ones (``departure_map_<source>``, ``polar_<signal>``).

    Examples
    --------
    >>> import bemcheck, tempfile
    >>> case = bemcheck.load_case(bemcheck.example_path("free-pair"))
    >>> run = bemcheck.run_case(case, tempfile.mkdtemp(), model="free")
    >>> sorted(make_figures(bemcheck.load_results(run.folder), run.folder / "figures"))
    ['attenuation', 'polar_controlled']
    """
    _check_formats(formats)
    inputs = figure_inputs(
        ds, case=case, mesh=mesh, signals=signals, frequencies=frequencies, tolerance_db=tolerance_db
    )
    return {d.name: d.path for d in draw_figures(inputs, out_dir, formats)}
