"""A loudspeaker cabinet: a box, optionally with rounded edges (gmsh, OpenCASCADE).

Centred on the origin; depth along z, width along x, height along y.  The
driver face is the flat part of the +z face, physical group "driver"; the rest
is "wall".  With edge_radius > 0 all twelve edges are filleted (OpenCASCADE
blends the corners into sphere octants), giving the parallel body of the inner
box at distance edge_radius.

Element size: the requested size h, at most THICKNESS_FRACTION of the smallest
side (so a thin cabinet still has elements across it).  Rounded edges get the
sagitta rule of ``_sizing.py`` with curvature 1/r and half the smallest side
as the local radius, but no less than ROUND_FRACTION r (they hold little
volume), graded into the flat faces at GRADING metres per metre with a
Distance -> Threshold background field.  Run ``python geometry/box.py --help``.
"""

import argparse
import math

from bemcheck.geometry_scripts._sizing import allowed_deviation, mean_radius, sagitta_size, set_background
from bemcheck.geometry_scripts._standalone import write_msh

ROUND_FRACTION = 0.8
THICKNESS_FRACTION = 0.5
MIN_ROUND = 0.02
# gentler than a bell's profile: faster growth gave edges beyond the thickness bound
GRADING = 0.4


def solid_measures(depth, width, height, edge_radius=0.0):
    """Area [m^2] and volume [m^3] of the cabinet solid.

    The rounded box is the parallel body at distance r of the inner box
    (sides a, b, c reduced by 2 r); Steiner's formula gives
    V = abc + 2 (ab + bc + ca) r + pi (a + b + c) r^2 + 4/3 pi r^3 and
    A = 2 (ab + bc + ca) + 2 pi (a + b + c) r + 4 pi r^2 (Santaló,
    *Integral Geometry and Geometric Probability*, 1976, sec. 13.1; from memory).

    Examples
    --------
    >>> [round(x, 6) for x in solid_measures(0.2, 0.2, 0.2, 0.1)]   # a sphere of radius 0.1
    [0.125664, 0.004189]
    """
    r = edge_radius
    a, b, c = depth - 2 * r, width - 2 * r, height - 2 * r
    faces, edges = a * b + b * c + c * a, a + b + c
    area = 2 * faces + 2 * math.pi * edges * r + 4 * math.pi * r**2
    volume = a * b * c + 2 * faces * r + math.pi * edges * r**2 + 4 / 3 * math.pi * r**3
    return area, volume


def build(depth, width, height, edge_radius=0.0, size=0.05, scale=1.0, refinements=()):
    """Add the cabinet to the current gmsh model, with physical groups and mesh sizes.

    Parameters
    ----------
    depth, width, height : float
        Outer dimensions along z, x and y [m], > 0.
    edge_radius : float
        Rounding of all edges [m], 0 <= edge_radius < half the smallest dimension.
    size : float
        Largest element size wanted [m].
    scale : float
        Factor on the allowed deviation of the rounded edges (``_sizing.py``).
    refinements : sequence of _sizing.Refinement
        Finer elements round points close to the surface (body frame).

    Returns
    -------
    float
        The element size used on the flat faces [m].
    """
    import gmsh

    dims = {"depth": depth, "width": width, "height": height}
    for key, value in dims.items():
        if not value > 0.0:
            raise ValueError(f"size: {key} {value} m: expected > 0")
    smallest = min(dims.values())
    if not (edge_radius == 0.0 or MIN_ROUND * smallest <= edge_radius < 0.5 * smallest):
        raise ValueError(
            f"edge_radius {edge_radius} m: expected 0 (sharp edges) or between "
            f"{MIN_ROUND * smallest:.3g} m ({MIN_ROUND:g} of the smallest side; a finer "
            f"rounding costs many elements for no audible effect) and {0.5 * smallest:.3g} m "
            "(half the smallest side)"
        )
    occ = gmsh.model.occ
    box = occ.addBox(-0.5 * width, -0.5 * height, -0.5 * depth, width, height, depth)
    if edge_radius > 0.0:
        edges = [t for _, t in occ.getEntities(1)]
        occ.fillet([box], edges, [edge_radius])
    occ.synchronize()

    surfaces = [t for _, t in gmsh.model.getEntities(2)]
    driver = [t for t in surfaces if _is_flat_at(gmsh.model.getBoundingBox(2, t), 0.5 * depth)]
    gmsh.model.addPhysicalGroup(2, [t for t in surfaces if t not in driver], name="wall")
    gmsh.model.addPhysicalGroup(2, driver, name="driver")

    h = min(size, THICKNESS_FRACTION * min(dims.values()))
    for name in ("MeshSizeFromPoints", "MeshSizeFromCurvature", "MeshSizeExtendFromBoundary"):
        gmsh.option.setNumber("Mesh." + name, 0)
    gmsh.option.setNumber("Mesh.MeshSizeMax", h)
    gmsh.option.setNumber("Mesh.Algorithm", 6)
    rounds = [t for t in surfaces if gmsh.model.getType(2, t) != "Plane"]
    h_round = h
    if edge_radius > 0.0:
        body = mean_radius(*solid_measures(depth, width, height, edge_radius))
        deviation = allowed_deviation(size, 1.0 / edge_radius, 0.5 * smallest, body, scale)
        h_round = min(h, max(float(sagitta_size(deviation, 1.0 / edge_radius)), scale * ROUND_FRACTION * edge_radius))
    own = []
    if rounds and h_round < h:
        fields = gmsh.model.mesh.field
        dist = fields.add("Distance")
        fields.setNumbers(dist, "SurfacesList", rounds)
        fields.setNumber(dist, "Sampling", 40)
        ramp = fields.add("Threshold")
        fields.setNumber(ramp, "InField", dist)
        fields.setNumber(ramp, "SizeMin", h_round)
        fields.setNumber(ramp, "SizeMax", h)
        fields.setNumber(ramp, "DistMin", 0.0)
        fields.setNumber(ramp, "DistMax", (h - h_round) / GRADING)
        own.append(ramp)
    set_background(gmsh, own, refinements)
    return h


def _is_flat_at(bbox, z, tol=1e-6):
    return abs(bbox[2] - z) < tol * max(1.0, abs(z)) and abs(bbox[5] - z) < tol * max(1.0, abs(z))


def main(argv=None):
    """Mesh one cabinet and write it as a gmsh .msh file for inspection."""
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--depth", type=float, default=0.2, help="along z, the driver's axis [m]")
    p.add_argument("--width", type=float, default=0.15, help="along x [m]")
    p.add_argument("--height", type=float, default=0.25, help="along y [m]")
    p.add_argument("--edge-radius", type=float, default=0.0, help="edge rounding [m]")
    p.add_argument("--size", type=float, default=0.03, help="largest element size [m]")
    p.add_argument("-o", "--output", default="box.msh", help="output .msh file")
    args = p.parse_args(argv)
    write_msh("box", build, (args.depth, args.width, args.height, args.edge_radius, args.size), args.output)


if __name__ == "__main__":
    main()
