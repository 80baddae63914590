"""`bemcheck run --surface-fields`: the .vtu files hold the surface solution, the .pvd lists them.

The surface solution is solved again here from the mesh the .vtu holds (same mesh, same
solver, so the same numbers); levels are dB re 20 µPa of the RMS value (ISO 1683:2015),
phases in degrees.  The ParaView collection format: VTK File Formats, "Collection" (.pvd)
of the VTK User's Guide (Kitware, 11th ed. 2010; from memory).
"""

import xml.etree.ElementTree as ET

import meshio
import numpy as np
import pytest

import bemcheck
from bemcheck.cli import main
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.solvers.bem.solve import solve_frequency

CASE = """
[case]
title = "Surface fields (invented test case)"
[frequencies]
list = [200.0, 400.0]
[mesh]
band_octaves = 2
[floor]
z = -0.3
[[body]]
name = "ball"
kind = "sphere"
radius = 0.1
[[source]]
name = "p"
role = "primary"
at = [0.3, 0.0, 0.05]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [-0.3, 0.1, 0.0]
[observers]
far_field = { plane = "xy", step_deg = 30.0 }
"""


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("surface")
    path = tmp / "case.toml"
    path.write_text(CASE)
    code = main(
        [
            "run",
            str(path),
            "--out",
            str(tmp / "out"),
            "--no-report",
            "--surface-fields",
            "--quiet",
            "--mesh-cache",
            str(tmp / "cache"),
        ]
    )
    assert code == 0
    return bemcheck.load_case(path), tmp / "out"


def test_the_collection_lists_every_frequency(run):
    case, out = run
    root = ET.parse(out / "surface_fields.pvd").getroot()
    sets = root.find("Collection").findall("DataSet")
    assert [float(d.get("timestep")) for d in sets] == list(case.frequencies)
    assert all((out / d.get("file")).is_file() for d in sets)


def test_each_file_holds_the_surface_solution(run):
    case, out = run
    ds = bemcheck.load_results(out)
    sets = ET.parse(out / "surface_fields.pvd").getroot().find("Collection").findall("DataSet")
    x = np.array([s.position for s in case.sources])
    for d in sets:
        f = float(d.get("timestep"))
        vtu = meshio.read(out / d.get("file"))
        triangles = vtu.cells_dict["triangle"]
        assert len(triangles) == int(ds["elements"].sel(frequency=f))
        mesh = SurfaceMesh(vtu.points, triangles, np.ones(len(triangles), int))
        sol = solve_frequency(mesh, f, case.medium, x, floor=case.floor)
        q = ds["q_primary"].values + ds["q_control_free"].sel(frequency=f).values
        for name, p in [
            ("p", sol.surface_pressure[:, 0] * q[0]),
            ("c", sol.surface_pressure[:, 1] * q[1]),
            ("controlled", sol.surface_pressure @ q),
        ]:
            level = 20 * np.log10(np.abs(p) / np.sqrt(2) / 20e-6)
            np.testing.assert_allclose(vtu.point_data[f"{name}_spl_db"], level, rtol=0, atol=1e-9)
            np.testing.assert_allclose(vtu.point_data[f"{name}_phase_deg"], np.degrees(np.angle(p)), rtol=0, atol=1e-7)


def test_surface_fields_need_the_bem(tmp_path, capsys):
    path = tmp_path / "case.toml"
    path.write_text(CASE)
    assert main(["run", str(path), "--out", str(tmp_path / "out"), "--model", "free", "--surface-fields"]) == 2
    assert "--surface-fields: expected --model both" in capsys.readouterr().err
    assert not (tmp_path / "out" / "surface_fields.pvd").exists()
