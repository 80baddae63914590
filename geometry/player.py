"""A player: a spherical head on a cylindrical neck on a cylindrical torso (gmsh, OpenCASCADE).

Body frame: the torso's axis is +z, its base at z = 0 (the waist), its top at
``torso_height``; the neck rises from the torso's top for ``neck_length``
before it enters the head, whose centre is on the axis.  The player faces
+x, so the ears are at ±y on the head's equator.  One physical group, "wall".

Element sizes follow the sagitta rule of ``_sizing.py`` on each part with its
own curvature (1/radius) and local radius.  Run ``python geometry/player.py --help``.
"""

import argparse
import math

from bemcheck.case.shapes import Player
from bemcheck.geometry_scripts._sizing import local_size, mean_radius, set_background
from bemcheck.geometry_scripts._standalone import write_msh


def solid_measures(head_radius, neck_radius, neck_length, torso_radius, torso_height):
    """Area [m²] and volume [m³] of the union of the three solids, in closed form.

    Torso: a cylinder (radius R, height H) less the neck's footprint on its
    top.  Neck: the lateral surface of a cylinder (radius r) of the visible
    length L.  Head: a sphere (radius a) less the cap the neck covers, of
    height a - sqrt(a² - r²) (cap area 2πa·height).  The neck inside the head
    and inside nothing else adds no volume.

    Examples
    --------
    >>> a, v = solid_measures(0.1, 0.06, 0.05, 0.15, 0.5)
    >>> round(a, 6), round(v, 6)
    (0.733248, 0.040097)
    """
    a, r, length, big, height = head_radius, neck_radius, neck_length, torso_radius, torso_height
    cap = a - math.sqrt(a * a - r * r)
    area = (
        2.0 * math.pi * big * height
        + 2.0 * math.pi * big**2
        - math.pi * r**2
        + 2.0 * math.pi * r * length
        + 4.0 * math.pi * a**2
        - 2.0 * math.pi * a * cap
    )
    volume = math.pi * big**2 * height + math.pi * r**2 * length + 4.0 / 3.0 * math.pi * a**3
    return area, volume


def _check(head_radius, neck_radius, neck_length, torso_radius, torso_height):
    for key, value in (
        ("head_radius", head_radius),
        ("neck_radius", neck_radius),
        ("neck_length", neck_length),
        ("torso_radius", torso_radius),
        ("torso_height", torso_height),
    ):
        if not value > 0.0:
            raise ValueError(f"{key} {value} m: expected > 0")
    if not neck_radius < min(head_radius, torso_radius):
        raise ValueError(
            f"neck_radius {neck_radius} m: expected less than head_radius ({head_radius} m) "
            f"and torso_radius ({torso_radius} m)"
        )


def build(head_radius, neck_radius, neck_length, torso_radius, torso_height, size=0.05, scale=1.0, refinements=()):
    """Add the player to the current gmsh model, with its physical group and mesh sizes.

    Parameters
    ----------
    head_radius, neck_radius, neck_length, torso_radius, torso_height : float
        [m], > 0; the neck narrower than the head and the torso.
    size : float
        Largest element size wanted [m].
    scale : float
        Factor on the allowed deviation from the solid (``_sizing.py``).
    refinements : sequence of _sizing.Refinement
        Finer elements round points close to the surface (body frame).

    Returns
    -------
    float
        The largest element size used [m].
    """
    import gmsh

    _check(head_radius, neck_radius, neck_length, torso_radius, torso_height)
    occ = gmsh.model.occ
    z_head = Player(head_radius, neck_radius, neck_length, torso_radius, torso_height).head_height
    torso = occ.addCylinder(0.0, 0.0, 0.0, 0.0, 0.0, torso_height, torso_radius)
    # the neck runs from inside the torso to the head's centre, so the fused solid has no slivers
    neck = occ.addCylinder(0.0, 0.0, 0.5 * torso_height, 0.0, 0.0, z_head - 0.5 * torso_height, neck_radius)
    head = occ.addSphere(0.0, 0.0, z_head, head_radius)
    occ.fuse([(3, torso)], [(3, neck), (3, head)])
    occ.synchronize()
    surfaces = [t for _, t in gmsh.model.getEntities(2)]
    gmsh.model.addPhysicalGroup(2, surfaces, name="wall")

    body = mean_radius(*solid_measures(head_radius, neck_radius, neck_length, torso_radius, torso_height))
    sizes = {}
    for t in surfaces:
        x0, y0, z0, x1, y1, z1 = gmsh.model.getBoundingBox(2, t)
        half_width = 0.5 * max(x1 - x0, y1 - y0)
        if z0 > torso_height + 0.5 * neck_length:
            r = head_radius
        elif half_width < 0.5 * (neck_radius + torso_radius):
            r = neck_radius
        else:
            r = torso_radius
        sizes[t] = float(local_size(size, 1.0 / r, r, 2.0 * r, body, scale))
    fields = gmsh.model.mesh.field
    parts = []
    for h in sorted(set(sizes.values())):
        f = fields.add("Constant")
        fields.setNumbers(f, "SurfacesList", [t for t, v in sizes.items() if v == h])
        fields.setNumber(f, "VIn", h)
        fields.setNumber(f, "IncludeBoundary", 1)
        parts.append(f)
    smallest = fields.add("Min")
    fields.setNumbers(smallest, "FieldsList", parts)
    set_background(gmsh, [smallest], refinements)
    for name in ("MeshSizeFromPoints", "MeshSizeFromCurvature", "MeshSizeExtendFromBoundary"):
        gmsh.option.setNumber("Mesh." + name, 0)
    gmsh.option.setNumber("Mesh.MeshSizeMax", max(sizes.values()))
    gmsh.option.setNumber("Mesh.MeshSizeMin", 0.0)
    # MeshAdapt copes with the pole of the OCC sphere (see sphere.py)
    gmsh.option.setNumber("Mesh.Algorithm", 1)
    return max(sizes.values())


def main(argv=None):
    """Mesh one player and write it as a gmsh .msh file for inspection."""
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--head-radius", type=float, default=0.0875, help="head radius [m]")
    p.add_argument("--neck-radius", type=float, default=0.055, help="neck radius [m]")
    p.add_argument("--neck-length", type=float, default=0.06, help="visible neck length [m]")
    p.add_argument("--torso-radius", type=float, default=0.16, help="torso radius [m]")
    p.add_argument("--torso-height", type=float, default=0.55, help="torso height, waist to shoulders [m]")
    p.add_argument("--size", type=float, default=0.05, help="largest element size [m]")
    p.add_argument("-o", "--output", default="player.msh", help="output .msh file")
    args = p.parse_args(argv)
    write_msh(
        "player",
        build,
        (args.head_radius, args.neck_radius, args.neck_length, args.torso_radius, args.torso_height, args.size),
        args.output,
    )


if __name__ == "__main__":
    main()
