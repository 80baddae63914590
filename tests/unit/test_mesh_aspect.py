"""One triangle quality for `bemcheck mesh` and the report: √3 l_max² / (4A), 1 when equilateral."""

import numpy as np

from bemcheck.case import parse_case
from bemcheck.mesh.bands import plan_bands
from bemcheck.mesh.export import format_band_table, mesh_stats
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.mesh.triangles import aspect_ratios
from bemcheck.report.tables import mesh_rows
from tests.unit.test_report_figures import cube_mesh

CAB = """
[case]
title = "one box (invented)"
[frequencies]
list = [200.0]
[[source]]
name = "p"
role = "primary"
at = [1.0, 0.0, 0.0]
strength = 1e-3
[[body]]
name = "cab"
kind = "box"
at = [0.0, 0.0, 0.5]
size = [0.2, 0.2, 0.2]
"""


def triangle(*corners):
    """The aspect ratio of one plane triangle given by its corners (x, y)."""
    v = np.array([[x, y, 0.0] for x, y in corners])
    mesh = SurfaceMesh(v, np.array([[0, 1, 2]]), np.array([1]))
    return aspect_ratios(mesh.edge_lengths(), mesh.areas)


def test_the_measure_on_triangles_known_by_geometry():
    """By elementary geometry: the equilateral triangle scores 1; a flat cap of base 1 and
    height h (h small) has l_max = 1 and A = h/2, so √3 / (2h); a needle of base ε and
    height 1 has l_max = √(1 + ε²/4) and A = ε/2, so √3 (1 + ε²/4) / (2ε); three points
    on a line score inf."""
    np.testing.assert_allclose(triangle((0, 0), (1, 0), (0.5, 3**0.5 / 2)), 1.0, rtol=1e-12)
    h = 0.01
    np.testing.assert_allclose(triangle((0, 0), (1, 0), (0.5, h)), 3**0.5 / (2 * h), rtol=1e-12)
    e = 0.01
    np.testing.assert_allclose(triangle((0, 0), (e, 0), (e / 2, 1.0)), 3**0.5 * (1 + e**2 / 4) / (2 * e), rtol=1e-12)
    assert np.isinf(triangle((0, 0), (1, 0), (2, 0))[0])


def test_bemcheck_mesh_and_the_report_print_the_same_aspect_ratio():
    """The cube's right-isosceles triangles score √3 (l_max = √2 s, A = s²/2) in the
    band table of `bemcheck mesh` and in the report's mesh table alike."""
    mesh = cube_mesh(side=0.2)
    case = parse_case(CAB)
    stats = mesh_stats(case, mesh, plan_bands(case)[0])
    assert np.isclose(stats.worst_aspect, 3**0.5, rtol=1e-12)
    header, row = mesh_rows(mesh)
    assert row[header.index("worst aspect ratio")] == f"{3**0.5:.2f}" == "1.73"
    assert " 1.73 " in format_band_table([stats])
