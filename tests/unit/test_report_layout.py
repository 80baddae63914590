"""The meshed-layout figure: no axis label lands on other text, none leaves the figure.

Text extents are those of matplotlib's Agg renderer after a full draw
(matplotlib documentation, Artist.get_window_extent), the renderer the
report's PNG files are made with.  The layouts are invented for these tests.
"""

import itertools

import numpy as np
import pytest
from matplotlib.text import Text

from bemcheck.case import parse_case
from bemcheck.report import style
from bemcheck.report.layout import layout_figure
from tests.support.icosphere import icosphere, voxel_body

CASE = """
[case]
title = "Layout figure test (invented)"
[frequencies]
list = [200.0]
[[source]]
name = "primary_far_right"
role = "primary"
at = {primary}
strength = 1e-3
[[source]]
name = "control_left"
role = "control"
at = {control}
[observers]
far_field = {{ plane = "{plane}", step_deg = 30.0 }}
points = [ {{ name = "listener_front", at = {ear} }} ]
"""

LAYOUTS = {
    # plane, body mesh, primary, control, observer point [m]
    "cube in xz": (
        "xz",
        voxel_body([[[True]]], 0.2, origin=(-0.1, -0.1, 0.4)),
        [0.0, 0.0, 0.4],
        [-0.2, 0.0, 0.35],
        [0.1, 0.2, 0.6],
    ),
    "wide xy": (
        "xy",
        voxel_body([[[True]]], 0.2, origin=(-0.1, -0.1, 0.0)),
        [0.78, 0.52, 0.0],
        [-0.75, 0.09, 0.0],
        [0.0, -0.2, 0.3],
    ),
    "long bar in yz": (
        "yz",
        voxel_body(np.ones((6, 1, 1), bool), 0.1, origin=(-0.3, 0.0, 0.0)),
        [0.3, 0.1, 0.05],
        [-0.3, -0.1, 0.05],
        [0.0, 0.5, 0.0],
    ),
    "tall column in xz": (
        "xz",
        voxel_body(np.ones((1, 1, 8), bool), 0.1, origin=(0.0, 0.0, 0.0)),
        [0.2, 0.0, 0.8],
        [-0.2, 0.0, 0.1],
        [0.5, 0.0, 0.4],
    ),
    "small sphere in xy": ("xy", icosphere(0.02, 3), [0.05, 0.0, 0.0], [-0.05, 0.0, 0.0], [0.0, 0.05, 0.0]),
    # the control straight above the primary and the ear beside them: one spot across the xy plane
    "stacked in xy": (
        "xy",
        voxel_body([[[True]]], 0.1, origin=(-0.3, -0.05, -0.05)),
        [0.0, 0.0, 0.0],
        [0.0, 0.0, 0.2],
        [0.01, 0.0, 0.0],
    ),
}


def _drawn_texts(fig, renderer):
    """(artist, extent) of every text the figure draws, tick labels only inside the view."""
    out = []
    ticks = set()
    for ax in fig.axes:
        axes = [ax.xaxis, ax.yaxis] + ([ax.zaxis] if hasattr(ax, "zaxis") else [])
        for axis in axes:
            lo, hi = sorted(axis.get_view_interval())
            span = hi - lo
            for tick in axis.get_major_ticks():
                ticks.update((tick.label1, tick.label2))
                if lo - 1e-9 * span <= tick.get_loc() <= hi + 1e-9 * span:
                    for label in (tick.label1, tick.label2):
                        if label.get_visible() and label.get_text():
                            out.append((label, label.get_window_extent(renderer)))
    for text in fig.findobj(Text):
        if text in ticks or not text.get_visible() or not text.get_text().strip():
            continue
        out.append((text, text.get_window_extent(renderer)))
    return out


def _axis_labels(fig):
    labels = []
    for ax in fig.axes:
        for axis in [ax.xaxis, ax.yaxis] + ([ax.zaxis] if hasattr(ax, "zaxis") else []):
            if axis.label.get_text():
                labels.append(axis.label)
    return labels


@pytest.mark.parametrize("name", sorted(LAYOUTS))
def test_axis_labels_clear_every_other_text(name):
    plane, mesh, primary, control, ear = LAYOUTS[name]
    case = parse_case(CASE.format(plane=plane, primary=primary, control=control, ear=ear))
    with style.styled():
        fig = layout_figure(mesh, case)
        fig.canvas.draw()
        renderer = fig.canvas.get_renderer()
        texts = _drawn_texts(fig, renderer)
        labels = _axis_labels(fig)
        assert len(labels) == 5  # x, y, z in perspective; two in the plane
        extent = {id(t): bb for t, bb in texts}
        clashes = []
        for label in labels:
            mine = extent[id(label)]
            assert (
                fig.bbox.x0 <= mine.x0 and mine.x1 <= fig.bbox.x1 and fig.bbox.y0 <= mine.y0 and mine.y1 <= fig.bbox.y1
            ), f"{label.get_text()!r} leaves the figure: {mine}"
            for other, bb in texts:
                if other is not label and mine.overlaps(bb):
                    clashes.append(f"{label.get_text()!r} at {mine.bounds} on {other.get_text()!r} at {bb.bounds}")
        assert not clashes, "; ".join(clashes)


def test_the_check_sees_a_planted_overlap():
    """The bounding-box comparison itself: a label moved onto another is caught."""
    plane, mesh, primary, control, ear = LAYOUTS["cube in xz"]
    case = parse_case(CASE.format(plane=plane, primary=primary, control=control, ear=ear))
    with style.styled():
        fig = layout_figure(mesh, case)
        fig.canvas.draw()
        ax3, ax2 = fig.axes[:2]
        renderer = fig.canvas.get_renderer()
        z3 = ax3.zaxis.label.get_window_extent(renderer)
        # move the plane's y label onto the perspective's z label, in figure pixels
        ax2.yaxis.set_label_coords(*ax2.transAxes.inverted().transform(((z3.x0 + z3.x1) / 2, (z3.y0 + z3.y1) / 2)))
        fig.set_layout_engine("none")
        fig.canvas.draw()
        bbs = [t.get_window_extent(renderer) for t in (ax3.zaxis.label, ax2.yaxis.label)]
        assert any(a.overlaps(b) for a, b in itertools.combinations(bbs, 2))


def _names(fig):
    from matplotlib.text import Annotation

    return [t for t in fig.findobj(Annotation) if t.get_text().strip()]


@pytest.mark.parametrize("name", sorted(LAYOUTS))
def test_point_names_clear_every_other_text_and_stay_in_the_figure(name):
    """Each source's and observer's name tag: its drawn extent meets no other text of the
    figure (names, ticks, axis labels, titles, legend) and lies inside the figure."""
    plane, mesh, primary, control, ear = LAYOUTS[name]
    case = parse_case(CASE.format(plane=plane, primary=primary, control=control, ear=ear))
    with style.styled():
        fig = layout_figure(mesh, case)
        fig.canvas.draw()
        renderer = fig.canvas.get_renderer()
        texts = _drawn_texts(fig, renderer)
        names = _names(fig)
        assert names
        clashes = []
        for tag in names:
            mine = tag.get_window_extent(renderer)
            assert (
                fig.bbox.x0 <= mine.x0 and mine.x1 <= fig.bbox.x1 and fig.bbox.y0 <= mine.y0 and mine.y1 <= fig.bbox.y1
            )
            clashes += [
                f"{tag.get_text()!r} on {other.get_text()!r}"
                for other, bb in texts
                if other is not tag and mine.overlaps(bb)
            ]
        assert not clashes, "; ".join(clashes)


def test_points_on_one_spot_share_one_tag():
    plane, mesh, primary, control, ear = LAYOUTS["stacked in xy"]
    case = parse_case(CASE.format(plane=plane, primary=primary, control=control, ear=ear))
    with style.styled():
        fig = layout_figure(mesh, case)
        plane_tags = [t.get_text() for t in _names(fig) if t.axes is fig.axes[1]]
    assert "primary_far_right, control_left" in plane_tags


def test_the_rigid_floor_is_drawn():
    """With a [floor] (far field in its own plane only), the perspective shows the floor's plane at its
    height, within the axes, and the projection's title gives its height."""
    from bemcheck.report.layout import FLOOR_COLOUR

    plane, mesh, primary, control, ear = LAYOUTS["wide xy"]
    floor_z = min(float(mesh.vertices[:, 2].min()), primary[2], control[2], ear[2]) - 0.05
    text = CASE.format(plane=plane, primary=primary, control=control, ear=ear) + f"[floor]\nz = {floor_z}\n"
    with style.styled():
        fig = layout_figure(mesh, parse_case(text))
    ax3, ax2 = fig.axes[0], fig.axes[1]
    floors = [c for c in ax3.collections if np.allclose(c.get_facecolor()[0], FLOOR_COLOUR)]
    assert len(floors) == 1
    assert ax3.get_zlim()[0] < floor_z < ax3.get_zlim()[1]
    assert f"rigid floor at z = {floor_z:g} m, parallel" in ax2.get_title(loc="left")
