"""Every figure of the report, declared once: its name, drawer, caption, what it needs and where it goes.

:func:`~bemcheck.report.figures.make_figures` draws the figures of
:data:`FIGURES` that a run supports, in this order; the HTML page embeds
them with their captions, in the section each names.  Adding a figure is
one :class:`FigureSpec` here and its drawer (a function of
:class:`FigureInputs` and a signal name returning a matplotlib Figure).

Examples
--------
>>> [spec.name for spec in FIGURES][:3]
['layout', 'shortfall_map', 'departure_map']
>>> spec_named("polar").needs
(<Need.PLANE_CIRCLE: 'three far-field directions in the plane drawn'>,)
"""

from collections.abc import Callable
from dataclasses import dataclass, replace
from enum import Enum

from bemcheck.compare import CONTROLLED
from bemcheck.report.curves import attenuation_figure, sector_figure
from bemcheck.report.drive import driven_controls, volume_velocity_figure
from bemcheck.report.layout import layout_figure
from bemcheck.report.maps import departure_map_figure
from bemcheck.report.polar import polar_figure
from bemcheck.report.signals import figure_planes, has_bem, has_controls, plane_directions

FIGURES_SECTION, BEFORE_BUILD_SECTION = "figures", "before-build"


class Need(Enum):
    """What a figure needs from the run; its value says it in words."""

    BEM = "the BEM ran"
    CONTROLS = "control sources"
    MESH = "the meshed bodies"
    PLANE = "a far-field direction in the plane drawn"
    PLANE_CIRCLE = "three far-field directions in the plane drawn"
    DRIVERS = "notes played and a control source with a driver"


class Per(Enum):
    """How many figures one declaration gives."""

    RUN = "one figure, named as declared"
    CONTROLLED = "one for the controlled system, if it is among the chosen signals"
    SOURCE = "one per chosen source signal, named <name>_<source>"
    FOCUS = "one for the run's focus signal, named <name>_<signal>"


@dataclass(frozen=True)
class FigureInputs:
    """What the drawers draw from.

    ``ds``: the results Dataset; ``case``: the run's Case (None when it could
    not be re-read); ``mesh``: the meshed bodies (None when not at hand);
    ``tolerance``: the case's Tolerance (sectors included); ``tolerance_db``:
    the level tolerance [dB] of the sector curves; ``signals``: the signals
    of the departure maps; ``focus``: the signal of the polar plot;
    ``frequencies``: the polar plot's frequencies [Hz]; ``primary_q``: the
    primaries' strengths [m³/s] or None; ``plane``: the far-field plane a
    per-plane figure draws (None: the first).
    """

    ds: object
    case: object
    mesh: object
    tolerance: object
    tolerance_db: float | None
    signals: tuple
    focus: str
    frequencies: tuple
    primary_q: object
    plane: str | None = None


@dataclass(frozen=True)
class FigureSpec:
    """One figure of the report.

    ``draw(inputs, signal)`` returns a Figure (or None when there is
    nothing to draw after all); ``caption`` is printed under it,
    ``free_caption`` instead when the BEM did not run (None: the same);
    ``needs``: what the run must hold for the figure to apply; ``section``:
    "figures" or "before-build"; ``per_plane``: one figure per far-field
    plane (the first plane's named as declared, the others' with
    ``_<plane>`` appended), drawn with ``inputs.plane`` set.
    """

    name: str
    draw: Callable
    caption: str
    needs: tuple = ()
    per: Per = Per.RUN
    free_caption: str | None = None
    section: str = FIGURES_SECTION
    per_plane: bool = False

    def caption_for(self, bem):
        """The caption when the BEM ran (``bem`` True) or not."""
        return self.caption if bem or self.free_caption is None else self.free_caption


_HOLDS = {
    Need.BEM: lambda i: has_bem(i.ds),
    Need.CONTROLS: lambda i: has_controls(i.ds),
    Need.MESH: lambda i: i.mesh is not None,
    Need.PLANE: lambda i: plane_directions(i.ds, i.plane).size > 0,
    Need.PLANE_CIRCLE: lambda i: plane_directions(i.ds, i.plane).size >= 3,
    Need.DRIVERS: lambda i: bool(driven_controls(i.ds)),
}


def applies(spec, inputs):
    """True when the run holds everything ``spec`` needs."""
    return all(_HOLDS[need](inputs) for need in spec.needs)


def _map(quantity):
    return lambda i, g: departure_map_figure(i.ds, g, i.tolerance, i.tolerance.sectors, quantity, i.plane)


_HATCH = "Hatched: the departure is within the BEM's own error of the tolerance (refine the mesh to decide). "

FIGURES = (
    FigureSpec(
        "layout",
        lambda i, _: layout_figure(i.mesh, i.case),
        "The meshed bodies with the sources and observer points, in perspective and projected across the "
        "observers' plane.",
        needs=(Need.MESH,),
    ),
    FigureSpec(
        "shortfall_map",
        _map("shortfall"),
        "How far the controlled system's attenuation as designed, scattering included, falls short of what it "
        "must reach: the free-field prediction, capped by the target. Negative (blue): better than needed. "
        "Contour: the tolerated shortfall, beyond which a direction departs. Hatched: the BEM's own error cannot "
        "tell. Black bars: where the attenuation first surely falls short.",
        needs=(Need.BEM, Need.PLANE),
        per=Per.CONTROLLED,
        per_plane=True,
    ),
    FigureSpec(
        "departure_map",
        _map("level"),
        "Level departure of the scattered field (BEM) from the free-field prediction over frequency and azimuth. "
        "Colour: 20 log10 |p_BEM/p_free|, linear within the tolerance and logarithmic beyond it, up to the largest "
        "departure (the colour bar says if it clips). Solid and dashed contours: the level tolerance. Grey: nulls "
        "of both models (not judged). " + _HATCH + "Black bars: each sector's trust limit.",
        needs=(Need.BEM, Need.PLANE),
        per=Per.SOURCE,
        per_plane=True,
    ),
    FigureSpec(
        "phase_map",
        _map("phase"),
        "Phase departure of the scattered field (BEM) from the free-field prediction over frequency and azimuth, "
        "beside the level map: a trust limit can be set by either. Contours: the phase tolerance; grey, hatched "
        "and black bars as in the level map.",
        needs=(Need.BEM, Need.PLANE),
        per=Per.SOURCE,
        per_plane=True,
    ),
    FigureSpec(
        "departure_by_sector",
        lambda i, _: sector_figure(i.ds, i.tolerance_db),
        "RMS (solid) and largest (dashed) |level departure| over each sector's directions, per signal; the shaded "
        "band is the tolerance. Ticks on the frequency axis: frequencies where the mesh cannot tell for the "
        "controlled system.",
        needs=(Need.BEM,),
    ),
    FigureSpec(
        "polar",
        lambda i, g: polar_figure(i.ds, g, i.frequencies, i.primary_q, i.plane),
        "Sound pressure level at 1 m in a far-field plane at a few frequencies spread over the band (one near "
        "the trust limit), each model a curve, the primaries at the case's strengths; the dotted curve is the "
        "primaries alone with scattering (no control). One scale for every panel.",
        needs=(Need.PLANE_CIRCLE,),
        per=Per.FOCUS,
        per_plane=True,
        free_caption="Sound pressure level at 1 m in a far-field plane at a few frequencies spread over the "
        "band, free-field model only: the controlled system and the primaries alone (no control), "
        "the primaries at the case's strengths. One scale for every panel.",
    ),
    FigureSpec(
        "attenuation",
        lambda i, _: attenuation_figure(i.ds),
        "Attenuation of the radiated power by the control sources: as the free-field model predicts it, as the "
        "free-field design really gets it with the bodies scattering, and with the control strengths "
        "re-optimised for the scattered world.",
        needs=(Need.CONTROLS,),
        free_caption="Attenuation of the radiated power by the control sources as the free-field model predicts "
        "it (the BEM was not run).",
    ),
    FigureSpec(
        "volume_velocity",
        lambda i, _: volume_velocity_figure(i.ds, i.case),
        "Volume velocity (peak) each control loudspeaker must give at every harmonic of the notes played: filled "
        "markers as designed with the free-field model, open markers re-optimised with scattering (the free-field "
        "optimum again where the BEM did not solve that harmonic). Curves: what the loudspeaker in its closed box "
        "can give, within its excursion limit (Sd·xmax·ω) and at its rated power; shaded: beyond the lower of "
        "the two.",
        needs=(Need.DRIVERS,),
        section=BEFORE_BUILD_SECTION,
    ),
)


def spec_named(name):
    """The declaration called ``name`` (KeyError naming the known ones if none is)."""
    for spec in FIGURES:
        if spec.name == name:
            return spec
    raise KeyError(f"no figure {name!r}; known: {', '.join(s.name for s in FIGURES)}")


def planned(inputs):
    """The figures ``inputs`` supports, in drawing order, as (file name, spec, signal, plane).

    Consecutive per-signal declarations are expanded signal by signal, and
    within a signal plane by plane, so the maps of one signal sit together;
    ``plane`` is None for a figure that is not per plane.
    """
    out, block = [], []
    planes = figure_planes(inputs.ds)

    def each_plane(spec, name, g):
        for plane in planes if spec.per_plane else (None,):
            named = name if plane is None or plane == planes[0] else f"{name}_{plane}"
            out.append((named, spec, g, plane))

    def expand():
        for g in inputs.signals:
            for spec in block:
                if spec.per is Per.CONTROLLED and g == CONTROLLED:
                    each_plane(spec, spec.name, g)
                elif spec.per is Per.SOURCE and g != CONTROLLED:
                    each_plane(spec, f"{spec.name}_{g}", g)
        block.clear()

    for spec in FIGURES:
        if spec.per in (Per.CONTROLLED, Per.SOURCE):
            block.append(spec)
            continue
        expand()
        if spec.per is Per.RUN:
            each_plane(spec, spec.name, None)
        else:
            each_plane(spec, f"{spec.name}_{inputs.focus}", inputs.focus)
    expand()
    return [(name, spec, g, p) for name, spec, g, p in out if applies(spec, on_plane(inputs, p))]


def on_plane(inputs, plane):
    """``inputs`` for a figure of the far-field plane ``plane`` (None: as they are)."""
    return inputs if plane is None else replace(inputs, plane=plane)
