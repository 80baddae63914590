"""A loudspeaker cabinet: a box, optionally with rounded edges (gmsh, OpenCASCADE).

Centred on the origin; depth along z, width along x, height along y.  The
driver face is the flat part of the +z face, physical group "driver"; the rest
is "wall".  With edge_radius > 0 all twelve edges are filleted (OpenCASCADE
blends the corners into sphere octants), giving the parallel body of the inner
box at distance edge_radius.

Element size: the requested size h, at most THICKNESS_FRACTION of the smallest
side (so a thin cabinet still has elements across it).  Rounded edges get
2 pi r / ELEMENTS_PER_TURN, but no less than ROUND_FRACTION r (they hold little
volume), graded into the flat faces at GRADING metres per metre with a
Distance -> Threshold background field.  Run ``python geometry/box.py --help``.
"""

import argparse
import math

from bemcheck.geometry_scripts._standalone import write_msh

ELEMENTS_PER_TURN = 24
ROUND_FRACTION = 0.8
THICKNESS_FRACTION = 0.5
GRADING = 0.4
MIN_ROUND = 0.02


def build(depth, width, height, edge_radius=0.0, size=0.05):
    """Add the cabinet to the current gmsh model, with physical groups and mesh sizes.

    Parameters
    ----------
    depth, width, height : float
        Outer dimensions along z, x and y [m], > 0.
    edge_radius : float
        Rounding of all edges [m], 0 <= edge_radius < half the smallest dimension.
    size : float
        Largest element size wanted [m].

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
            "(half the smallest side)")
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
    h_round = min(h, max(2.0 * math.pi * edge_radius / ELEMENTS_PER_TURN,
                         ROUND_FRACTION * edge_radius))
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
        fields.setAsBackgroundMesh(ramp)
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
