"""A picture of the meshed layout: the bodies' triangles, the sources and the observer points."""

import numpy as np
from matplotlib.collections import PolyCollection
from matplotlib.colors import to_rgb
from matplotlib.lines import Line2D
from matplotlib.text import Text
from matplotlib.ticker import MaxNLocator
from matplotlib.transforms import Bbox
from mpl_toolkits.mplot3d import proj3d
from mpl_toolkits.mplot3d.art3d import Poly3DCollection

from bemcheck.report import style

_AXES = {"x": 0, "y": 1, "z": 2}
PRIMARY_MARK = {"marker": "*", "s": 90, "color": "#8f1d14"}
CONTROL_MARK = {"marker": "o", "s": 36, "color": "#0f6a73"}
POINT_MARK = {"marker": "^", "s": 36, "color": style.INK}
LABELPAD_3D = 10.0


def body_of_triangles(mesh):
    """Body name of every triangle, from the mesh's groups (``"bell.mouth"`` belongs to ``"bell"``).

    Parameters
    ----------
    mesh : SurfaceMesh

    Returns
    -------
    (nt,) ndarray of str
        Tags with no group are named ``"tag <n>"``.
    """
    names = {tag: name.split(".")[0] for name, tag in mesh.groups.items()}
    return np.array([names.get(int(t), f"tag {int(t)}") for t in mesh.domains])


def _face_colours(mesh, shade):
    bodies = body_of_triangles(mesh)
    order = list(dict.fromkeys(bodies))
    base = {b: np.array(to_rgb(style.CYCLE[(i + 3) % len(style.CYCLE)])) for i, b in enumerate(order)}
    rgb = np.array([base[b] for b in bodies])
    # Parts of a body (a mouth, a driver face) a shade lighter than the body.
    part = np.isin(mesh.domains, [t for name, t in mesh.groups.items() if "." in name])
    rgb[part] = 0.55 * rgb[part] + 0.45
    return np.clip(rgb * shade[:, None], 0.0, 1.0), base


def _markers(case):
    """(positions (n, 3), marker style, label) of the case's sources and observer points."""
    out = []
    if case is None:
        return out
    for s in case.sources:
        out.append((np.array(s.position), PRIMARY_MARK if s.role == "primary" else CONTROL_MARK, s.name))
    for p in case.observers.points:
        out.append((np.array(p.at), POINT_MARK, p.name))
    return out


def layout_figure(mesh, case=None):
    """The meshed bodies in perspective and projected on the observers' plane, with sources and observers.

    Parameters
    ----------
    mesh : SurfaceMesh
        Outward-oriented triangles [m]; bodies told apart by ``mesh.groups``.
    case : Case, optional
        Gives the sources, the observer points and the plane to project on:
        the first named far-field plane (default "xy").

    Returns
    -------
    matplotlib.figure.Figure
    """
    # the first named plane of the far field (a plane by its normal has no coordinate axes to draw on)
    named = [f.plane for f in case.observers.far_field if f.normal is None] if case is not None else []
    plane = named[0] if named else "xy"
    a, b = _AXES[plane[0]], _AXES[plane[1]]
    normal = np.cross(np.eye(3)[a], np.eye(3)[b])
    p = mesh.vertices[mesh.triangles]  # (nt, 3, 3)
    n = np.cross(p[:, 1] - p[:, 0], p[:, 2] - p[:, 0])
    n /= np.maximum(np.linalg.norm(n, axis=1, keepdims=True), 1e-300)
    marks = _markers(case)
    cloud = np.vstack([mesh.vertices] + [m[0][None] for m in marks])
    floor = case.floor if case is not None else None
    if floor is not None:
        cloud = np.vstack([cloud, [[cloud[0, 0], cloud[0, 1], floor.z]]])
    lo, hi = cloud.min(axis=0), cloud.max(axis=0)
    pad = 0.06 * max(float((hi - lo).max()), 1e-3)
    lo, hi = lo - pad, hi + pad

    fig = style.new_figure(11.0, 5.2)
    ax3 = fig.add_subplot(1, 2, 1, projection="3d")
    light = np.array([0.35, -0.55, 0.75])
    colours, base = _face_colours(mesh, 0.55 + 0.45 * np.clip(n @ (light / np.linalg.norm(light)), 0.0, 1.0))
    ax3.add_collection3d(
        Poly3DCollection(p, facecolors=colours, edgecolors=(0, 0, 0, 0.18), linewidths=0.15, rasterized=True)
    )
    for pos, mark, _label in marks:
        ax3.scatter(*pos, depthshade=False, **mark)
    if floor is not None:
        corners = [(lo[0], lo[1]), (hi[0], lo[1]), (hi[0], hi[1]), (lo[0], hi[1])]
        ax3.add_collection3d(
            Poly3DCollection([[(x, y, floor.z) for x, y in corners]], facecolors=FLOOR_COLOUR, edgecolors=style.MUTED)
        )
    ax3.set_xlim(lo[0], hi[0])
    ax3.set_ylim(lo[1], hi[1])
    ax3.set_zlim(lo[2], hi[2])
    ax3.set_box_aspect(hi - lo)
    for axis in (ax3.xaxis, ax3.yaxis, ax3.zaxis):
        # the perspective foreshortens the axes: default tick counts crowd their labels
        axis.set_major_locator(MaxNLocator(5, steps=[1, 2, 5, 10]))
    # foreshortened axes bring tick labels close to the axis label: pad it further out [pt]
    ax3.set_xlabel("x [m]", labelpad=LABELPAD_3D)
    ax3.set_ylabel("y [m]", labelpad=LABELPAD_3D)
    ax3.set_zlabel("z [m]", labelpad=LABELPAD_3D)
    ax3.set_title("Layout in perspective")

    ax2 = fig.add_subplot(1, 2, 2)
    depth = p.mean(axis=1) @ normal
    order = np.argsort(depth)  # far first: the viewer looks along -normal
    flat, _ = _face_colours(mesh, 0.5 + 0.5 * np.abs(n @ normal))
    ax2.add_collection(
        PolyCollection(
            p[order][:, :, [a, b]], facecolors=flat[order], edgecolors=(0, 0, 0, 0.12), linewidths=0.15, rasterized=True
        )
    )
    for pos, mark, _label in marks:
        ax2.scatter(pos[a], pos[b], zorder=3, **mark)
    # a case with a floor observes in its own plane only (every other plane dips below it)
    floor_note = "" if floor is None else f"; rigid floor at z = {floor.z:g} m, parallel"
    ax2.set_xlim(lo[a], hi[a])
    ax2.set_ylim(lo[b], hi[b])
    ax2.set_aspect("equal")
    ax2.set_xlabel(f"{plane[0]} [m]")
    ax2.set_ylabel(f"{plane[1]} [m]")
    ax2.set_title(f"Seen across the observers' plane ({plane}){floor_note}")
    handles = [Line2D([], [], ls="none", marker="s", ms=8, color=c, label=name) for name, c in base.items()]
    handles += [
        Line2D([], [], ls="none", marker=PRIMARY_MARK["marker"], ms=10, color=PRIMARY_MARK["color"], label="primary"),
        Line2D([], [], ls="none", marker=CONTROL_MARK["marker"], ms=6, color=CONTROL_MARK["color"], label="control"),
        Line2D([], [], ls="none", marker=POINT_MARK["marker"], ms=6, color=POINT_MARK["color"], label="observer point"),
    ]
    ax2.legend(handles=handles, loc="upper left", bbox_to_anchor=(1.02, 1.0))
    fig.suptitle(f"Meshed layout: {mesh.n_triangles} triangles", x=0.01, ha="left", fontsize=10, fontweight="bold")
    _separate(fig, ax3, ax2)
    if marks:
        # the names go on last, into the finished layout, which is then kept as it is
        fig.draw_without_rendering()
        fig.set_layout_engine("none")
        renderer = fig.canvas.get_renderer()
        proj = ax3.get_proj()
        on3 = [(tuple(proj3d.proj_transform(*pos, proj)[:2]), label) for pos, _, label in marks]
        on2 = [((pos[a], pos[b]), label) for pos, _, label in marks]
        for ax, anchors in ((ax3, on3), (ax2, on2)):
            name_points(ax, anchors, renderer)
    return fig


# The rigid floor, drawn as a translucent plane (RGBA).
FLOOR_COLOUR = (0.55, 0.45, 0.35, 0.18)


# Where a name may sit beside its point [pt], tried in this order.
LABEL_OFFSETS = (
    (4, 3),
    (-4, 3),
    (4, -4),
    (-4, -4),
    (0, 7),
    (0, -8),
    (9, 9),
    (-9, 9),
    (9, -10),
    (-9, -10),
    (0, 16),
    (0, -17),
)
# Points closer than this on the page share one name tag [pt].
SAME_PLACE_PT = 5.0
MARKER_HALF_PT = 4.0
# Above the 3-D panel's triangles, which it stacks by depth from zorder 1 upwards.
LABEL_ZORDER = 1e6


def _group(display, labels, tol_px):
    """Indices grouped by points closer than ``tol_px`` on the page."""
    groups = []
    for i, xy in enumerate(display):
        for g in groups:
            if np.hypot(*(display[g[0]] - xy)) <= tol_px:
                g.append(i)
                break
        else:
            groups.append([i])
    return groups


def _overlap(box, others):
    return sum(
        max(0.0, min(box.x1, o.x1) - max(box.x0, o.x0)) * max(0.0, min(box.y1, o.y1) - max(box.y0, o.y0))
        for o in others
    )


def name_points(ax, anchors, renderer):
    """Write each point's name beside it where it meets no other text, marker or the axes' edge.

    Points that land on one spot of the page (a source straight above
    another, seen across the plane) share one tag, ``"a, b"``.  Each name
    takes the first place of :data:`LABEL_OFFSETS` that is clear; where none
    is, the one with the least overlap.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        In its final position (the figure's layout done).
    anchors : sequence of ((float, float), str)
        Data coordinates of each point (projected ones for a 3-D axes) and its name.
    renderer
        The figure's renderer.

    Returns
    -------
    list of matplotlib.text.Annotation
    """
    fig = ax.figure
    px = fig.dpi / 72.0
    display = np.array([ax.transData.transform(xy) for xy, _ in anchors])
    taken = [
        t.get_window_extent(renderer)
        for t in fig.findobj(Text)
        if t.get_visible() and t.get_text().strip() and t.figure is fig
    ]
    half = MARKER_HALF_PT * px
    taken += [Bbox.from_extents(x - half, y - half, x + half, y + half) for x, y in display]
    frame = ax.bbox
    placed = []
    for g in _group(display, [lab for _, lab in anchors], SAME_PLACE_PT * px):
        text = ", ".join(anchors[i][1] for i in g)
        best = None
        for dx, dy in LABEL_OFFSETS:
            note = ax.annotate(
                text,
                anchors[g[0]][0],
                xytext=(dx, dy),
                textcoords="offset points",
                fontsize=7,
                ha="left" if dx > 0 else "right" if dx < 0 else "center",
                va="bottom" if dy > 0 else "top",
                annotation_clip=False,
                zorder=LABEL_ZORDER,
            )
            box = note.get_window_extent(renderer)
            outside = (
                max(0.0, frame.x0 - box.x0)
                + max(0.0, box.x1 - frame.x1)
                + max(0.0, frame.y0 - box.y0)
                + max(0.0, box.y1 - frame.y1)
            )
            cost = _overlap(box, taken) + 1e3 * outside
            if best is None or cost < best[0]:
                if best is not None:
                    best[1].remove()
                best = (cost, note, box)
            else:
                note.remove()
            if cost == 0.0:
                break
        taken.append(best[2])
        placed.append(best[1])
    return placed


def _separate(fig, left, right, gap_pt=14.0, rounds=4):
    """Widen the space between the panels until everything the 3-D panel draws clears the 2-D panel.

    Constrained layout leaves a 3-D axes' axis labels out of its sums
    (matplotlib's Axis3D.get_tightbbox drops them when asked for layout),
    so its z label would land on the 2-D panel's y label.  The 3-D panel's
    extent is measured after a layout pass and the gap widened by what is
    missing; the projection moves with the panel's width, hence a few rounds.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        With a constrained layout engine.
    left, right : matplotlib.axes.Axes
        The 3-D panel and the panel to its right.
    gap_pt : float
        Clearance to keep between them [pt].
    rounds : int
        Layout passes at most.
    """
    engine = fig.get_layout_engine()
    gap_px = gap_pt * fig.dpi / 72.0
    for _ in range(rounds):
        fig.draw_without_rendering()
        renderer = fig.canvas.get_renderer()
        short = left.get_tightbbox(renderer).x1 + gap_px - right.get_tightbbox(renderer).x0
        if short <= 0.0:
            return
        engine.set(wspace=engine.get()["wspace"] + short / fig.bbox.width)
