"""How large a scene's mesh will be at least, known from the bodies' areas before gmsh runs.

A triangle whose longest edge is at most h has an area of at most √3/4 h²
(the equilateral triangle has the largest area for a given longest edge), so
a surface of area A meshed with edges up to h has at least A / (√3/4 h²)
triangles, and a closed surface of genus 0 with F triangles has F/2 + 2
vertices (Euler's formula V − E + F = 2 with E = 3F/2).  Geometric size
bounds only make elements smaller, so these are lower bounds: a mesh refused
on them would certainly not fit.
"""

import importlib
import math

from bemcheck.errors import CaseError, GeometryError
from bemcheck.memory import available_memory, dense_bytes

# Inscribed facets lose a little area (under 1 % at the sizes bemcheck meshes,
# see bemcheck/mesh/bodies.py); the bound allows twice that.
AREA_ALLOWANCE = 0.98
# Largest scene refused even where the available memory is unknown: 2 million
# triangles give a million unknowns, 32 TB of dense matrices.
MAX_TRIANGLES = 2_000_000


def check_shapes(case):
    """Refuse, before any work, a body its geometry script cannot build (a bell's rim too large for its flare).

    Each script's ``solid_measures`` solves the solid's section from the
    parameters (milliseconds, no gmsh) and says why one does not fit.

    Raises
    ------
    CaseError
        Naming the case file, the body and the script's reason.

    Examples
    --------
    >>> from bemcheck.case import parse_case
    >>> text = "\\n".join(['[case]', 'title = "t"', '[frequencies]', 'list = [100.0]', '[[body]]', 'name = "b"',
    ...     'kind = "bell"', 'mouth_radius = 0.46', 'throat_radius = 0.006', 'length = 2.3', 'flare = 0.035',
    ...     'rim_radius = 0.013', '[[source]]', 'name = "p"', 'role = "primary"', 'at = [0.0, 0.0, 1.0]',
    ...     'strength = 1e-3'])
    >>> check_shapes(parse_case(text))
    Traceback (most recent call last):
    ...
    bemcheck.errors.CaseError: <case>: body[0] 'b': rim_radius 0.013 m is too large ...
    """
    for i, body in enumerate(case.bodies):
        if body.shape.SCRIPT is None:
            continue
        script = importlib.import_module(f"bemcheck.geometry_scripts.{body.shape.SCRIPT}")
        try:
            script.solid_measures(*body.shape.script_args())
        except ValueError as exc:
            raise CaseError(
                f"{case.path or '<case>'}: body[{i}] '{body.name}': {exc} "
                f"(the {body.kind} cannot be built; nothing was meshed)"
            ) from None


def triangles_lower_bound(area, element_size):
    """Triangles at least needed to cover ``area`` [m²] with edges up to ``element_size`` [m].

    Examples
    --------
    >>> triangles_lower_bound(4.0 * math.pi, 0.1)   # a unit sphere at 10 cm
    2844
    """
    count = AREA_ALLOWANCE * area / max(math.sqrt(3.0) / 4.0 * element_size**2, 1e-300)
    return int(min(count, 1e18))  # an absurd size stays a (refused) number, not an overflow


def check_mesh_size(case, element_size, refine=1.0, available=None):
    """Refuse, before gmsh runs, a scene whose mesh would not fit in memory.

    Parameters
    ----------
    case : Case
    element_size : float
        Largest element edge asked of the mesh [m].
    refine : float
        Uniform refinement as :func:`~bemcheck.mesh.scene.mesh_scene` takes it:
        edges up to ``element_size / refine`` (below 1: a coarser mesh).
    available : int, optional
        Bytes of memory free; default the machine's (Linux MemAvailable).

    Raises
    ------
    GeometryError
        When the scene's triangles at least exceed MAX_TRIANGLES, or its dense
        BEM matrices at least exceed the available memory; the message names
        the largest body, its triangles and the keys setting the size.
    """
    h = element_size / refine
    counts = []
    for i, body in enumerate(case.bodies):
        area = body.shape.area_lower_bound()
        if area is not None:
            counts.append((triangles_lower_bound(area, h), i, body))
    if not counts:
        return
    triangles = sum(n for n, _, _ in counts)
    unknowns = triangles // 2 + 2 * len(counts)
    needed = dense_bytes(unknowns)
    available = available_memory() if available is None else available
    if triangles <= MAX_TRIANGLES and (available is None or needed <= available):
        return
    n, i, body = max(counts, key=lambda c: c[0])
    gib = 1024.0**3
    room = f"{available / gib:.1f} GiB is available" if available is not None else "the memory available is unknown"
    finer = f", refined {refine:.3g}x" if refine != 1.0 else ""
    raise GeometryError(
        f"{case.path}: body[{i}] '{body.name}': at element size {1e3 * h:.3g} mm (set by the top frequency and "
        f"mesh.elements_per_wavelength = {case.mesh.elements_per_wavelength:g}{finer}) its surface of "
        f"{body.shape.area_lower_bound():.3g} m² needs at least {n:,} triangles; the scene at least {triangles:,} "
        f"({unknowns:,} unknowns), whose dense BEM matrices need {needed / gib:,.1f} GiB, and {room} "
        f"(at most {MAX_TRIANGLES:,} triangles in any case); expected a lower top frequency, fewer elements per "
        "wavelength or a smaller body: nothing was meshed"
    )
