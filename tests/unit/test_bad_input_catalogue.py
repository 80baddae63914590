"""Catalogue of bad inputs, end to end through the `bemcheck` command.

Every row runs ``main([...])`` in this process and asserts the contract of
``bemcheck/cli/app.py``: exit code 2, a message on stderr naming the file, the key
or the element and what was expected, no traceback, and nothing half-written
(no results.nc, summary.json or report.html, no ``*.part`` temporary, no lock).
The case-file rows of ``test_case_loader.py`` are not repeated here; these
rows cover mesh files, the scene, the output folder, command options and
case keys that one does not reach.

The physical rules behind the refusals, with their sources:

* The Burton-Miller equation holds for a closed surface with a known outward
  normal (Burton & Miller 1971, Proc. R. Soc. Lond. A 323, 201-210, sec. 2):
  holes, non-manifold edges, mixed orientation, zero-area or NaN triangles
  leave it undefined.
* Inside or outside a closed surface: the winding number, 1 inside and 0
  outside (Jacobson, Kavan & Sorkine-Hornung 2013, "Robust inside-outside
  segmentation using generalized winding numbers", ACM Trans. Graph. 32(4) 33).
  The octahedron |x| + |y| + |z| <= a used here makes it plain arithmetic.
* Element size: at least 4 linear elements per wavelength for any accuracy,
  6 usually advised (Marburg 2002, "Six boundary elements per wavelength: is
  that enough?", J. Comput. Acoust. 10(1) 25-51; from memory).
* A rigid floor: the half-space Green's function holds above the plane only (method of
  images, Morse & Ingard 1968, Theoretical Acoustics, ch. 7): a body, source or observer
  at or below it, or a far-field direction pointing below it, has no meaning there.
* TOML files are UTF-8 (TOML v1.0.0 specification, "Spec").  ENOSPC is "no
  space left on device" (POSIX.1-2017, <errno.h>).
"""

import errno
import os
import resource
import signal
import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest

import bemcheck
from bemcheck.cli import main
from bemcheck.mesh.scene import check_file_bodies
from bemcheck.results import files as results
from tests.support.cases import FREE_CASE

DATA = Path(__file__).resolve().parents[1] / "data" / "bad"
OUTPUTS = ("results.nc", "summary.json", "report.html", ".bemcheck.lock")

# A cabinet read from a mesh file (the octahedron |x| + |y| + |z| <= 0.1 m,
# edge 0.1 * sqrt(2) = 0.141 m), a primary and a control 0.5 m either side,
# one listener.  Every row changes one thing.
BASE = """
[case]
title = "Catalogue row (invented test case)"
[frequencies]
list = [100.0, 200.0]
[mesh]
band_octaves = 4
[[body]]
name = "cab"
kind = "file"
path = "{mesh}"
[[source]]
name = "p"
role = "primary"
at = [0.5, 0.0, 0.0]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [-0.5, 0.0, 0.0]
[observers]
far_field = { plane = "xy", step_deg = 30.0 }
points = [ { name = "ear", at = [0.0, 1.0, 0.0] } ]
"""

NOTE = '[[note]]\nname = "n"\nfundamental = 100.0\nspl_at_1m = [90.0]\n{where}\n[observers]'
FLOOR = "[floor]\nz = {z}\n[observers]"
AMP = '[[amplifier]]\nname = "{name}"\nrated_voltage_rms = {volts}\nrated_current_rms = {amps}\ncontrols = {controls}\n'


def _amp(name="a", volts="20.0", amps="5.0", controls='["c"]'):
    return AMP.format(name=name, volts=volts, amps=amps, controls=controls)


FF = 'far_field = { plane = "xy", step_deg = 30.0 }'


def _planes(*entries):
    """``far_field`` as a list of ``entries`` (inline tables)."""
    return "far_field = [ " + ", ".join(entries) + " ]"


BOX = '[[body]]\nname = "cab2"\nkind = "box"\nsize = [0.2, 0.2, 0.2]\nat = [{x}, 0.0, 0.0]\n[[source]]\nname = "p"'


@dataclass(frozen=True)
class Row:
    """One bad input.

    ``changes`` are (old, new) replacements in BASE; ``mesh`` the file the
    case reads (a name in tests/data/bad, or "{tmp}/..." made by ``setup``);
    ``words`` must all be in the error message and ``warnings`` in the
    warning lines, with "{case}" and "{tmp}" filled in; ``why`` is the
    arithmetic that makes the input bad, shown when the row fails.
    """

    name: str
    words: tuple
    changes: tuple = ()
    mesh: str = "octahedron.obj"
    command: str = "run"
    extra: tuple = ()
    setup: object = None
    out: str = "{tmp}/out"
    why: str = ""
    warnings: tuple = ()


def _directory(tmp):
    (tmp / "folder.stl").mkdir()


def _regular_file(tmp):
    (tmp / "taken").write_text("a file where the run folder should go\n")


def _not_utf8(tmp):
    (tmp / "case.toml").write_bytes(b'[case]\ntitle = "\xff\xfe caf\xe9"\n')


def _volume_mesh(tmp):
    # gmsh 2.2 ASCII with one tetrahedron and no surface (gmsh reference
    # manual, "MSH file format version 2": element type 4 = 4-node tetrahedron)
    (tmp / "tetra.msh").write_text(
        "$MeshFormat\n2.2 0 8\n$EndMeshFormat\n$Nodes\n4\n1 0 0 0\n2 0.1 0 0\n3 0 0.1 0\n"
        "4 0 0 0.1\n$EndNodes\n$Elements\n1\n1 4 2 1 1 1 2 3 4\n$EndElements\n"
    )


ROWS = [
    # -- the mesh resolves the frequency? --------------------------------
    Row(
        "file body too coarse for the top frequency",
        ("body 'cab'", "octahedron.obj", "1000 Hz", "at least 4", "606 Hz"),
        changes=(("list = [100.0, 200.0]", "list = [100.0, 1000.0]"),),
        why="edge 0.1414 m: 343 / 1000 / 0.1414 = 2.4 elements per wavelength < 4 (Marburg 2002); "
        "4 per wavelength hold up to 343 / (4 x 0.1414) = 606 Hz",
    ),
    # -- the scene -------------------------------------------------------
    Row(
        "two bodies intersecting",
        ("bodies 'cab' and 'cab2'", "intersect", "expected"),
        changes=(('[[source]]\nname = "p"', BOX.format(x=0.15)),),
        why="box from x = 0.05 m; octahedron vertex (0.1, 0, 0) is inside it",
    ),
    Row(
        "source inside a body",
        ("source 'p'", "inside body 'cab'", "expected"),
        changes=(("at = [0.5, 0.0, 0.0]", "at = [0.02, 0.01, 0.0]"),),
        why="|0.02| + |0.01| + 0 = 0.03 < 0.1: inside the octahedron",
    ),
    Row(
        "source on a surface",
        ("source 'p'", "from the surface of body 'cab'", "margin"),
        changes=(("at = [0.5, 0.0, 0.0]", "at = [0.035, 0.035, 0.035]"),),
        why="0.105 > 0.1: outside by 0.005 / sqrt(3) = 2.9 mm, on the face as CAD draws it",
    ),
    Row(
        "observer point inside a body",
        ("observer point 'ear'", "inside body 'cab'", "expected a point in the air"),
        changes=(("at = [0.0, 1.0, 0.0]", "at = [0.0, 0.0, 0.05]"),),
    ),
    Row(
        "gmsh body with a source inside it",
        ("source 'p'", "inside body 'cab2'", "expected"),
        changes=(('[[source]]\nname = "p"', BOX.format(x=0.5)),),
        why="the box at x = 0.5 m holds the primary: the error comes from the gmsh mesh",
    ),
    # -- mesh files ------------------------------------------------------
    Row(
        "mesh file that does not exist",
        ("{case}", "body[0].path", "nowhere.obj", "expected an existing mesh file"),
        mesh="nowhere.obj",
    ),
    Row(
        "mesh file is a folder",
        ("{case}", "body[0].path", "folder.stl", "expected an existing mesh file"),
        mesh="{tmp}/folder.stl",
        setup=_directory,
    ),
    Row(
        "mesh file is a truncated binary STL",
        ("body 'cab'", "truncated.stl", "no points", "expected a surface mesh"),
        mesh="truncated.stl",
        why="header promises 1000 facets of 50 bytes, 1 given (binary STL layout, 3D Systems 1989; from memory)",
    ),
    Row("mesh file is empty", ("body 'cab'", "empty.stl", "empty", "expected a surface mesh"), mesh="empty.stl"),
    Row("mesh file with a hole", ("body 'cab'", "holed.obj", "hole (not closed)"), mesh="holed.obj"),
    Row("mesh file non-manifold", ("body 'cab'", "fin.obj", "non-manifold", "shared by 3 triangles"), mesh="fin.obj"),
    Row(
        "mesh file with a degenerate triangle",
        ("body 'cab'", "degenerate.obj", "triangle 2 is degenerate", "zero area"),
        mesh="degenerate.obj",
    ),
    Row("mesh file with mixed orientation", ("body 'cab'", "mixed.obj", "mixed orientation"), mesh="mixed.obj"),
    Row("mesh file with a NaN coordinate", ("body 'cab'", "nan.obj", "NaN"), mesh="nan.obj"),
    Row(
        "mesh file holding only a volume",
        ("body 'cab'", "tetra.msh", "tetra", "expected a surface mesh"),
        mesh="{tmp}/tetra.msh",
        setup=_volume_mesh,
    ),
    Row(
        "mesh file in millimetres without scale",
        ("body 'cab'", "millimetres.obj", "too coarse"),
        mesh="millimetres.obj",
        warnings=("millimetres.obj", "519.6 m across", "set scale = 0.001"),
        why="a 300 mm octahedron read as 300 m: 519.6 m between opposite corners of its box "
        "(300 sqrt 3), edges of 212 m: too coarse at 200 Hz",
    ),
    Row("mesh scale zero", ("{case}", "body[0].scale", "positive"), changes=(('path = "', 'scale = 0.0\npath = "'),)),
    Row(
        "source placed on a file body",
        ("{case}", "source[1].at", "file body"),
        changes=(("at = [-0.5, 0.0, 0.0]", 'on = "cab"'),),
    ),
    # -- the output folder and the command line ---------------------------
    Row(
        "output folder under a regular file",
        ("{tmp}/taken/out", "cannot create the output folder", "expected a folder"),
        out="{tmp}/taken/out",
        setup=_regular_file,
        why="tests run as root, which ignores permission bits; a path under a file fails for anyone (ENOTDIR)",
    ),
    Row(
        "output folder is a regular file",
        ("{tmp}/taken", "cannot create the output folder", "expected a folder"),
        out="{tmp}/taken",
        setup=_regular_file,
        command="mesh",
    ),
    Row(
        "frequency subset not in the case",
        ("--frequencies", "5000 Hz is not within 0.1 % of a frequency of", "{case}"),
        extra=("--frequencies", "5000"),
    ),
    Row(
        "frequency subset unreadable",
        ("--frequencies", "expected '200,400' or '200:800'"),
        extra=("--frequencies", "two hundred"),
    ),
    Row("no local workers", ("--workers", "≥ 1"), extra=("--workers", "0")),
    Row(
        "report of a folder with no results",
        ("{tmp}/out", "no results file", "expected the folder of a finished"),
        command="report",
    ),
    Row("case file not UTF-8", ("{case}", "cannot read the case file", "expected a UTF-8 TOML file"), setup=_not_utf8),
    # -- case keys the loader rows do not reach ----------------------------
    Row(
        "driver excursion typed in millimetres",
        ("{case}", "driver[0].xmax", "one-way excursion in metres"),
        changes=(
            (
                "[observers]",
                '[[driver]]\nname = "d"\nre = 6.0\nbl = 7.0\nmms = 0.02\ncms = 1e-3\nrms = 1.5\n'
                "sd = 0.0133\nxmax = 5.0\nvb = 0.02\nrated_power = 50.0\n[observers]",
            ),
        ),
        why="sd = pi a^2 gives a cone radius of 65 mm: a 5 m excursion is impossible",
    ),
    Row(
        "spectrum with no harmonic levels",
        ("{case}", "source[0].spectrum.spl_at_1m", "required"),
        changes=(("strength = 1e-3", "[source.spectrum]\nfundamental = 233.0"),),
    ),
    Row(
        "spectrum levels as one number",
        ("{case}", "source[0].spectrum.spl_at_1m", "a list of at least 1"),
        changes=(("strength = 1e-3", "[source.spectrum]\nfundamental = 233.0\nspl_at_1m = 95.0"),),
    ),
    Row(
        "control sector below -360 degrees",
        ("{case}", "control.sector.from_deg", "≥ -360"),
        changes=(
            (
                "[observers]",
                '[control]\nobjective = "sector"\nsector = { from_deg = -400.0, to_deg = 0.0 }\n[observers]',
            ),
        ),
    ),
    Row(
        "control sector wider than a turn",
        ("{case}", "control.sector.to_deg", "by at most 360"),
        changes=(
            (
                "[observers]",
                '[control]\nobjective = "sector"\nsector = { from_deg = -90.0, to_deg = 300.0 }\n[observers]',
            ),
        ),
    ),
    # -- inputs refused for what they imply, before any work ---------------
    Row(
        "a billion frequencies per octave",
        ("{case}", "frequencies.per_octave", "at most 10,000 frequencies", "gives 1,000,000,001"),
        changes=(("list = [100.0, 200.0]", "start = 100.0\nstop = 200.0\nper_octave = 1e9"),),
        why="1e9 per octave over one octave: 1e9 + 1 frequencies (24 GB of floats alone)",
    ),
    Row(
        "directions every 1e-7 degree",
        ("{case}", "observers.far_field.step_deg", "at most 36,000 directions", "3,600,000,000"),
        changes=(("step_deg = 30.0", "step_deg = 1e-7"),),
        why="360 / 1e-7 = 3.6e9 directions",
    ),
    Row(
        "a trillion placement trials",
        ("{case}", "build.trials", "≤ 100,000"),
        changes=(("[observers]", "[build]\ntrials = 1000000000000\n[observers]"),),
    ),
    Row(
        "sphere too large to mesh at 8 kHz",
        ("{case}", "body[0] 'cab'", "mesh.elements_per_wavelength = 20", "triangles", "GiB", "nothing was meshed"),
        changes=(
            ('kind = "file"\npath', 'kind = "sphere"\nradius = 2.0\n# path'),
            ("list = [100.0, 200.0]", "list = [100.0, 8000.0]"),
            ("band_octaves = 4", "band_octaves = 8\nelements_per_wavelength = 20"),
            ("at = [0.5, 0.0, 0.0]", "at = [2.5, 0.0, 0.0]"),
            ("at = [-0.5, 0.0, 0.0]", "at = [-2.5, 0.0, 0.0]"),
            ("at = [0.0, 1.0, 0.0]", "at = [0.0, 3.0, 0.0]"),
        ),
        why="4 pi 2^2 = 50.3 m^2 at edges of 343 / 8000 / 20 = 2.1 mm: at least 50.3 / (sqrt(3)/4 2.1e-3^2) "
        "= 2.5e7 triangles (the equilateral triangle is the largest for its longest edge)",
    ),
    Row(
        "sphere too large to mesh at 8 kHz, mesh command",
        ("{case}", "body[0] 'cab'", "triangles"),
        command="mesh",
        changes=(
            ('kind = "file"\npath', 'kind = "sphere"\nradius = 2.0\n# path'),
            ("list = [100.0, 200.0]", "list = [100.0, 8000.0]"),
            ("band_octaves = 4", "band_octaves = 8\nelements_per_wavelength = 20"),
            ("at = [0.5, 0.0, 0.0]", "at = [2.5, 0.0, 0.0]"),
            ("at = [-0.5, 0.0, 0.0]", "at = [-2.5, 0.0, 0.0]"),
            ("at = [0.0, 1.0, 0.0]", "at = [0.0, 3.0, 0.0]"),
        ),
    ),
    Row(
        "elements per wavelength 1e300",
        ("{case}", "mesh.elements_per_wavelength", "≤ 100"),
        changes=(("band_octaves = 4", "band_octaves = 4\nelements_per_wavelength = 1e300"),),
        why="an element size of 1e-300 m: its square underflows to zero",
    ),
    Row(
        "strength 1e300",
        ("{case}", "source[0].strength", "volume-velocity amplitude from 1e-12 to 100 m^3/s"),
        changes=(("strength = 1e-3", "strength = 1e300"),),
    ),
    Row(
        "speed of sound 1e-300",
        ("{case}", "medium.speed_of_sound", "from 10 to 10000 m/s"),
        changes=(("[frequencies]", "[medium]\nspeed_of_sound = 1e-300\n[frequencies]"),),
    ),
    Row(
        "density 1e-320",
        ("{case}", "medium.density", "a density from"),
        changes=(("[frequencies]", "[medium]\ndensity = 1e-320\n[frequencies]"),),
    ),
    Row(
        "placement tolerance 1e300 m",
        ("{case}", "source[1].position_tolerance", "a placement tolerance from 0 to 10 m"),
        changes=(
            ("at = [-0.5, 0.0, 0.0]", "at = [-0.5, 0.0, 0.0]\nposition_tolerance = 1e300"),
            ("[observers]", '[[note]]\nname = "n"\nfundamental = 200.0\nspl_at_1m = [90.0]\n[observers]'),
        ),
        why="random builds 1e300 m off overflow the distances: NaN in the placement study",
    ),
    Row(
        "observer 1e200 m away",
        ("{case}", "observers.points[0].at[1]", "a coordinate from -10000 to 10000 m"),
        changes=(("at = [0.0, 1.0, 0.0]", "at = [0.0, 1e200, 0.0]"),),
    ),
    Row(
        "axis of length 1e-200",
        ("{case}", "body[0].axis", "a direction [x, y, z]"),
        changes=(('path = "', 'axis = [1e-200, 0.0, 0.0]\npath = "'),),
        why="1e-200 squared underflows to 0: the axis cannot be normalised",
    ),
    Row(
        "sphere of radius 1e23 m",
        ("{case}", "body[0].radius", "a length from 1e-05 to 1000 m"),
        changes=(('kind = "file"\npath', 'kind = "sphere"\nradius = 1e23\n# path'),),
    ),
    *(
        Row(
            f"bell rim too large for its flare, {command} command",
            ("{case}", "body[0] 'cab'", "rim_radius 0.013 m is too large for this bell", "nothing was meshed"),
            changes=(
                (
                    'kind = "file"\npath',
                    'kind = "bell"\nmouth_radius = 0.46\nthroat_radius = 0.006\nlength = 2.3\nflare = 0.035\n'
                    "rim_radius = 0.013\n# path",
                ),
            ),
            command=command,
            why="bemcheck check accepted it and the run refused it only when meshing, naming neither file nor key: "
            "with so slow a flare the rim circle, tangent to the mouth plane inside the wall, crosses the axis",
        )
        for command in ("run", "mesh")
    ),
    Row(
        "observer at a source",
        ("{case}", "observers.points[0].at", "coincides with source 'p'"),
        changes=(("at = [0.0, 1.0, 0.0]", "at = [0.5, 0.0, 0.0]"),),
    ),
    Row(
        "Lebedev degree 4",
        ("{case}", "observers.far_field.degree", "3, 5, 7, 9", "131"),
        changes=(('far_field = { plane = "xy", step_deg = 30.0 }', "far_field = { sphere = true, degree = 4 }"),),
        why="Lebedev rules exist for odd degrees (3 to 31, then every 6th to 131 in scipy)",
    ),
    # -- no empty judgement ------------------------------------------------
    Row(
        "tolerance sector between two directions",
        ("{case}", "tolerance.sectors[0]", "'narrow'", "holds no far-field direction", "step_deg = 10"),
        changes=(
            ("step_deg = 30.0", "step_deg = 10.0"),
            (
                "[observers]",
                '[tolerance]\nsectors = [ { name = "narrow", from_deg = 11.0, to_deg = 12.0 } ]\n[observers]',
            ),
        ),
        why="directions at 0, 10, 20, ... degrees: none between 11 and 12",
    ),
    Row(
        "control sector between two directions",
        ("{case}", "control.sector", "holds no far-field direction", "step_deg = 30"),
        changes=(
            (
                "[observers]",
                '[control]\nobjective = "sector"\nsector = { from_deg = 31.0, to_deg = 59.0 }\n[observers]',
            ),
        ),
        why="directions at 0, 30, 60, ... degrees: none between 31 and 59",
    ),
    Row(
        "piston given a position",
        ("{case}", "source[1].at", "no position for a piston", "cab2"),
        changes=(
            ('[[source]]\nname = "p"', BOX.format(x=3.0)),
            ("at = [-0.5, 0.0, 0.0]", 'on = "cab2"\nradiator = "piston"\nat = [-0.5, 0.0, 0.0]'),
        ),
        why="the free-field monopole would sit at `at`, the BEM's piston on the face: two layouts",
    ),
    Row(
        "body name with a dot",
        ("{case}", "body[1].name", "without '.'", "cab2.x"),
        changes=(('[[source]]\nname = "p"', BOX.format(x=3.0).replace('"cab2"', '"cab2.x"')),),
        why="mesh groups are named <body>.<face>: a body 'cab2.x' would pass for a face of 'cab2'",
    ),
    Row("empty frequency subset", ("--frequencies", "empty value"), extra=("--frequencies", "")),
    Row("blank frequency subset", ("--frequencies", "empty value"), extra=("--frequencies", "  ")),
    # -- where a note's levels were measured -------------------------------
    Row(
        "note direction given as a vector",
        ("{case}", "note[0].direction", "an angle pair [azimuth_deg, elevation_deg]"),
        changes=(("[observers]", NOTE.format(where="direction = [1.0, 0.0, 0.0]")),),
    ),
    Row(
        "note elevation beyond the pole",
        ("{case}", "note[0].direction[1]", "≤ 90"),
        changes=(("[observers]", NOTE.format(where="direction = [0.0, 120.0]")),),
    ),
    Row(
        "note distance zero",
        ("{case}", "note[0].distance", "a positive number"),
        changes=(("[observers]", NOTE.format(where="distance = 0.0")),),
    ),
    Row(
        "note distance negative",
        ("{case}", "note[0].distance", "a positive number"),
        changes=(("[observers]", NOTE.format(where="distance = -1.0")),),
    ),
    Row(
        "note measured inside a body",
        ("{case}", "note[0].distance", "inside body 'cab'", "expected a point in the air"),
        changes=(("[observers]", NOTE.format(where="direction = [180.0, 0.0]\ndistance = 0.45")),),
        why="primary at x = 0.5 m, 0.45 m toward -x: (0.05, 0, 0), |0.05| < 0.1: inside the octahedron",
    ),
    # -- a rigid floor ------------------------------------------------------
    Row(
        "source below the floor",
        ("{case}", "source[0].at", "0.1 m below the floor", "floor.z = -0.2"),
        changes=(("[observers]", FLOOR.format(z=-0.2)), ("at = [0.5, 0.0, 0.0]", "at = [0.5, 0.0, -0.3]")),
    ),
    Row(
        "source on the floor",
        ("{case}", "source[1].at", "on the floor", "expected a point above the floor"),
        changes=(("[observers]", FLOOR.format(z=-0.2)), ("at = [-0.5, 0.0, 0.0]", "at = [-0.5, 0.0, -0.2]")),
    ),
    Row(
        "observer below the floor",
        ("{case}", "observers.points[0].at", "'ear'", "below the floor"),
        changes=(("[observers]", FLOOR.format(z=-0.2)), ("at = [0.0, 1.0, 0.0]", "at = [0.0, 1.0, -0.5]")),
    ),
    Row(
        "body placed below the floor",
        ("{case}", "body[0].at", "body 'cab'", "below the floor"),
        changes=(
            ("[observers]", FLOOR.format(z=0.05)),
            ("at = [0.5, 0.0, 0.0]", "at = [0.5, 0.0, 0.3]"),
            ("at = [-0.5, 0.0, 0.0]", "at = [-0.5, 0.0, 0.3]"),
            ("at = [0.0, 1.0, 0.0]", "at = [0.0, 1.0, 0.3]"),
        ),
    ),
    Row(
        "body reaching through the floor",
        ("{case}", "body[0] 'cab'", "0.05 m below the floor", "floor.z = -0.05"),
        changes=(("[observers]", FLOOR.format(z=-0.05)),),
        why="the octahedron's lowest corner is at z = -0.1 m, 0.05 m below the floor",
    ),
    Row(
        "body too close to the floor",
        (
            "{case}",
            "body[0] 'cab'",
            "0.02 m above the floor",
            "0.25 of the local element",
            "0.0354 m",
            "raise the body",
        ),
        changes=(("[observers]", FLOOR.format(z=-0.12)),),
        why="lowest corner 0.02 m above the floor; edges 0.1414 m: a quarter is 0.0354 m (body and image half an "
        "element apart, as two bodies)",
    ),
    Row(
        "far-field plane below the floor",
        ("{case}", "observers.far_field", 'plane = "xz"', "below the floor", 'plane = "xy"'),
        changes=(("[observers]", FLOOR.format(z=-0.2)), ('plane = "xy"', 'plane = "xz"')),
        why="the xz circle at 30-degree steps holds 5 directions with z < 0",
    ),
    # -- far-field planes --------------------------------------------------
    Row(
        "unknown plane name in a list of planes",
        ("{case}", "observers.far_field[1].plane", "'xy', 'xz', 'yz'", "'xw'"),
        changes=((FF, _planes('{ plane = "xy" }', '{ plane = "xw" }')),),
    ),
    Row(
        "plane with a zero normal",
        ("{case}", "observers.far_field[1].normal", "a non-zero direction"),
        changes=((FF, _planes('{ plane = "xy" }', '{ name = "tilt", normal = [0.0, 0.0, 0.0] }')),),
    ),
    Row(
        "plane with an infinite normal",
        ("{case}", "observers.far_field[0].normal[0]", "a finite number", "inf"),
        changes=((FF, _planes('{ name = "tilt", normal = [inf, 0.0, 1.0] }')),),
    ),
    Row(
        "plane with a NaN normal",
        ("{case}", "observers.far_field[0].normal[2]", "a finite number", "nan"),
        changes=((FF, _planes('{ name = "tilt", normal = [1.0, 0.0, nan] }')),),
    ),
    Row(
        "plane by its normal without a name",
        ("{case}", "observers.far_field[1].name", "a name for the plane of this normal"),
        changes=((FF, _planes('{ plane = "xy" }', "{ normal = [1.0, 0.0, 1.0] }")),),
    ),
    Row(
        "azimuth zero along the normal",
        ("{case}", "observers.far_field[0].zero", "not along the normal", "[0.0, 0.0, -3.0]"),
        changes=((FF, _planes('{ name = "tilt", normal = [0.0, 0.0, 1.0], zero = [0.0, 0.0, -3.0] }')),),
    ),
    Row(
        "the same plane twice, named and by its normal",
        ("{case}", "observers.far_field[1]", "'flat'", "'xy'", "parallel", "each plane once"),
        changes=((FF, _planes('{ plane = "xy" }', '{ name = "flat", normal = [0.0, 0.0, -2.0] }')),),
        why="the normal of xy is +z; [0, 0, -2] is parallel to it: the same circle of directions",
    ),
    Row(
        "the same named plane twice",
        ("{case}", "observers.far_field[1]", "'xz' is asked for twice", "each plane once"),
        changes=((FF, _planes('{ plane = "xz" }', '{ plane = "xz", step_deg = 10.0 }')),),
    ),
    Row(
        "two spheres",
        ("{case}", "observers.far_field[1]", "'sphere' is asked for twice", "at most one sphere"),
        changes=((FF, _planes("{ sphere = true, degree = 5 }", "{ sphere = true, degree = 7 }")),),
    ),
    Row(
        "empty list of planes",
        ("{case}", "observers.far_field", "a non-empty list", "[]"),
        changes=((FF, "far_field = []"),),
    ),
    Row(
        "tolerance sector in a plane not asked for",
        ("{case}", "tolerance.sectors[0].plane", "a plane of observers.far_field ('xy', 'xz')", "'yz'"),
        changes=(
            (FF, _planes('{ plane = "xy" }', '{ plane = "xz" }')),
            (
                "[observers]",
                '[tolerance]\nsectors = [ { name = "s", from_deg = 0.0, to_deg = 90.0, plane = "yz" } ]\n[observers]',
            ),
        ),
    ),
    Row(
        "control sector on the sphere",
        ("{case}", "control.sector.plane", "a plane of observers.far_field ('xz')", "'sphere'"),
        changes=(
            (FF, _planes("{ sphere = true, degree = 7 }", '{ plane = "xz" }')),
            (
                "[observers]",
                '[control]\nobjective = "sector"\nsector = { from_deg = -30.0, to_deg = 30.0 }\n[observers]',
            ),
        ),
        why="the control sector names no plane, so it takes the first, the sphere; its target must be a circle",
    ),
    Row(
        "several planes below the floor",
        ("{case}", "observers.far_field", 'plane = "xz" holds 5', "the sphere (degree 5) holds", 'plane = "xy"'),
        changes=(
            ("[observers]", FLOOR.format(z=-0.2)),
            (
                FF,
                _planes(
                    '{ plane = "xy", step_deg = 30.0 }',
                    '{ plane = "xz", step_deg = 30.0 }',
                    "{ sphere = true, degree = 5 }",
                ),
            ),
        ),
        why="the xz circle at 30-degree steps holds 5 directions with z < 0; the degree-5 Lebedev rule "
        "(14 points: 6 axes, 8 cube corners) holds 5 (-z and 4 corners)",
    ),
    # -- control-channel tolerances ----------------------------------------
    Row(
        "channel gain tolerance negative",
        ("{case}", "build.channel_gain_db", "≥ 0"),
        changes=(("[observers]", "[build]\nchannel_gain_db = -0.5\n[observers]"),),
    ),
    Row(
        "channel phase tolerance beyond half a turn",
        ("{case}", "build.channel_phase_deg", "≤ 180"),
        changes=(("[observers]", "[build]\nchannel_phase_deg = 270.0\n[observers]"),),
    ),
    Row(
        "channel delay tolerance negative",
        ("{case}", "build.channel_delay_s", "≥ 0"),
        changes=(("[observers]", "[build]\nchannel_delay_s = -1e-4\n[observers]"),),
    ),
    # -- amplifier channels ------------------------------------------------
    Row(
        "amplifier voltage zero",
        ("{case}", "amplifier[0].rated_voltage_rms", "a positive number"),
        changes=(("[observers]", _amp(volts="0.0") + "[observers]"),),
    ),
    Row(
        "amplifier current negative",
        ("{case}", "amplifier[0].rated_current_rms", "a positive number"),
        changes=(("[observers]", _amp(amps="-2.0") + "[observers]"),),
    ),
    Row(
        "amplifier voltage 1e300",
        ("{case}", "amplifier[0].rated_voltage_rms", "an RMS voltage from"),
        changes=(("[observers]", _amp(volts="1e300") + "[observers]"),),
    ),
    Row(
        "amplifier current missing",
        ("{case}", "amplifier[0].rated_current_rms", "required key is missing"),
        changes=(("[observers]", _amp().replace("rated_current_rms = 5.0\n", "") + "[observers]"),),
    ),
    Row(
        "amplifier feeding a control that does not exist",
        ("{case}", "amplifier[0].controls[1]", 'the name of a source with role = "control" (c)', "'ctl_9'"),
        changes=(("[observers]", _amp(controls='["c", "ctl_9"]') + "[observers]"),),
    ),
    Row(
        "amplifier feeding the primary",
        ("{case}", "amplifier[0].controls[0]", 'role = "control"', "'p'"),
        changes=(("[observers]", _amp(controls='["p"]') + "[observers]"),),
    ),
    Row(
        "amplifier feeding nothing",
        ("{case}", "amplifier[0].controls", "at least one control source name"),
        changes=(("[observers]", _amp(controls="[]") + "[observers]"),),
    ),
    Row(
        "control on two amplifiers",
        ("{case}", "amplifier[1].controls[0]", "already fed by amplifier 'a'"),
        changes=(("[observers]", _amp() + _amp(name="b") + "[observers]"),),
    ),
    Row(
        "amplifier name used twice",
        ("{case}", "amplifier[1].name", "'a' is used twice"),
        changes=(
            ("[observers]", _amp() + _amp(controls='["c2"]') + "[observers]"),
            (
                '[[source]]\nname = "c"',
                '[[source]]\nname = "c2"\nrole = "control"\nat = [0.0, -0.5, 0.0]\n[[source]]\nname = "c"',
            ),
        ),
    ),
    Row(
        "amplifier key unknown",
        ("{case}", "amplifier[0].rated_power", "unknown key"),
        changes=(("[observers]", _amp() + "rated_power = 100.0\n[observers]"),),
    ),
]


def _fill(text, tmp, case):
    return text.replace("{tmp}", str(tmp)).replace("{case}", str(case))


def _mesh_path(row, tmp):
    return _fill(row.mesh, tmp, "") if row.mesh.startswith("{tmp}") else str(DATA / row.mesh)


def _write_case(row, tmp):
    text = BASE.replace("{mesh}", _mesh_path(row, tmp))
    for old, new in row.changes:
        assert old in text, (row.name, old)
        text = text.replace(old, new, 1)
    path = tmp / "case.toml"
    if not path.exists():
        path.write_text(text)
    return path


def _argv(row, case, out, cache):
    if row.command == "report":
        return ["report", str(out)]
    argv = [row.command, str(case), "--out", str(out), "--mesh-cache", str(cache)]
    if row.command == "run":
        argv.append("--no-report")
    return argv + list(row.extra)


def assert_nothing_half_written(tmp, out):
    """No results, summary, report or lock in ``out``; no temporary anywhere under ``tmp``."""
    if out.is_dir():
        left = [name for name in OUTPUTS if (out / name).exists()]
        assert not left, f"left in {out}: {left}"
    parts = sorted(str(p) for p in tmp.rglob("*.part"))
    assert not parts, parts


@pytest.mark.parametrize("row", ROWS, ids=[r.name for r in ROWS])
def test_bad_input_is_refused_with_a_message(row, tmp_path, capsys):
    if row.setup is not None:
        row.setup(tmp_path)
    case = _write_case(row, tmp_path)
    out = Path(_fill(row.out, tmp_path, case))
    code = main(_argv(row, case, out, tmp_path / "cache"))
    captured = capsys.readouterr()
    err = captured.err
    assert code == 2, (row.name, row.why, code, err)
    assert "Traceback" not in err + captured.out
    assert "bemcheck: error: " in err, err
    message = err[err.index("bemcheck: error: ") :]
    for word in row.words:
        assert _fill(word, tmp_path, case) in message, (row.name, row.why, word, message)
    for word in row.warnings:
        warned = "\n".join(line for line in err.splitlines() if line.startswith("bemcheck: warning: "))
        assert _fill(word, tmp_path, case) in warned, (row.name, word, err)
    assert_nothing_half_written(tmp_path, out)


@pytest.mark.parametrize("mesh", ["octahedron.obj", "millimetres.obj"])
def test_the_catalogue_base_case_is_good(mesh, tmp_path, capsys):
    """Negative control: the base case (and the millimetre file given scale = 0.001)
    meshes with exit 0 and no error, so each row fails for its own change only."""
    text = BASE.replace("{mesh}", str(DATA / mesh))
    if mesh == "millimetres.obj":
        text = text.replace('path = "', 'scale = 0.001\npath = "')
    case = tmp_path / "case.toml"
    case.write_text(text)
    assert main(["check", str(case)]) == 0
    code = main(["mesh", str(case), "--out", str(tmp_path / "meshes"), "--mesh-cache", str(tmp_path / "cache")])
    err = capsys.readouterr().err
    assert code == 0, err
    assert "error" not in err and "millimetres" not in err
    assert sorted(p.suffix for p in (tmp_path / "meshes").iterdir()) == [".msh", ".vtu"]


@pytest.mark.parametrize("top, refused", [(600.0, False), (612.0, True)])
def test_file_body_resolution_boundary(top, refused, tmp_path):
    """The octahedron's edge is 0.1 sqrt(2) m, so 4 elements per wavelength hold up
    to c / (4 x 0.1 sqrt 2) = 606.3 Hz at c = 343 m/s (Marburg 2002's lower limit;
    from memory): 600 Hz passes, 612 Hz is refused."""
    case = tmp_path / "case.toml"
    case.write_text(
        BASE.replace("{mesh}", str(DATA / "octahedron.obj")).replace("list = [100.0, 200.0]", f"list = [100.0, {top}]")
    )
    c = bemcheck.load_case(case)
    if refused:
        with pytest.raises(bemcheck.GeometryError, match=r"too coarse for 612 Hz.* 3\.96? elements"):
            check_file_bodies(c, tmp_path / "cache")
    else:
        check_file_bodies(c, tmp_path / "cache")


class DiskFull:
    """Make the ``n``-th call of ``os.fsync`` (and every later one) fail as a full disk would."""

    def __init__(self, n):
        self.n, self.calls = n, 0
        self.real = os.fsync

    def __call__(self, fd):
        self.calls += 1
        if self.calls >= self.n:
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))
        return self.real(fd)


def test_disk_full_mid_sweep_keeps_nothing_half_written_and_resumes(tmp_path, capsys, monkeypatch):
    """The 4th stored task hits ENOSPC (POSIX.1-2017 <errno.h>) while its bytes are
    flushed: exit 2, a message, no results.nc, no temporary; the rerun computes
    only the tasks not stored and gives the numbers of a run that never failed.

    A sweep with no bodies: the BEM path answers the free field (see
    tests/verification/test_run_without_bodies.py), so the sweep machinery runs
    without a solver's compile time.
    """
    case = tmp_path / "case.toml"
    case.write_text(FREE_CASE)
    out = tmp_path / "out"
    argv = ["run", str(case), "--out", str(out), "--model", "both", "--no-report"]
    full = DiskFull(4)
    monkeypatch.setattr(os, "fsync", full)
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    assert "No space left on device" in err and "run the same command to resume" in err
    assert_nothing_half_written(tmp_path, out)
    stored = sorted(p.name for p in (out / "parts").glob("*.npz"))
    assert len(stored) == 3
    monkeypatch.setattr(os, "fsync", full.real)
    assert main(argv) == 0
    err = capsys.readouterr().err
    assert err.count("(stored)") == 3  # resumed, not recomputed
    assert {p.name for p in (out / "parts").glob("*.npz")} >= set(stored)
    assert main(argv[:3] + [str(tmp_path / "clean")] + argv[4:]) == 0
    a, b = bemcheck.load_results(out), bemcheck.load_results(tmp_path / "clean")
    for name in a.data_vars:
        np.testing.assert_array_equal(a[name].values, b[name].values, err_msg=name)


@pytest.mark.parametrize("target", [results.RESULTS_FILE, results.SUMMARY_FILE])
def test_disk_full_while_writing_the_results(target, tmp_path, capsys, monkeypatch):
    """ENOSPC while results.nc or summary.json is flushed: exit 2 with the file's
    name, neither file is left (a results.nc without its summary would look like
    a finished run), no temporary; the rerun writes both from the stored tasks."""
    case = tmp_path / "case.toml"
    case.write_text(FREE_CASE)
    out = tmp_path / "out"
    argv = ["run", str(case), "--out", str(out), "--model", "both", "--no-report"]
    real_write = results.atomic_write_bytes

    def write(path, data):
        if Path(path).name == target:  # the real write, its flush failing
            monkeypatch.setattr(os, "fsync", DiskFull(1))
        return real_write(path, data)

    monkeypatch.setattr(results, "atomic_write_bytes", write)
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err
    assert f"bemcheck: error: {out / target}: No space left on device" in err
    assert_nothing_half_written(tmp_path, out)
    monkeypatch.undo()
    assert main(argv) == 0
    assert (out / "results.nc").is_file() and (out / "summary.json").is_file()
    assert capsys.readouterr().err.count("(stored)") == len(list((out / "parts").glob("*.npz")))


def _file_size_limit():
    # EFBIG instead of the SIGXFSZ that would kill the process (POSIX.1-2017 setrlimit, RLIMIT_FSIZE)
    signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
    resource.setrlimit(resource.RLIMIT_FSIZE, (100_000, 100_000))


def test_file_size_limit_while_writing_the_results(tmp_path):
    """A real write failure, not a simulated one: a file-size limit of 100 kB lets
    every stored task through but stops results.nc (about 170 kB) mid-write with
    EFBIG.  An HDF5 file written to disk then could not be closed: h5py printed
    tracebacks and the process died of a segmentation fault.  Now: exit 2, the
    file named, no traceback, nothing half-written; without the limit the rerun
    finishes from the stored tasks."""
    case = tmp_path / "case.toml"
    case.write_text(FREE_CASE.replace("stop = 800.0\nper_octave = 3", "stop = 1600.0\nper_octave = 12"))
    out = tmp_path / "out"
    argv = [sys.executable, "-m", "bemcheck", "run", str(case), "--out", str(out), "--model", "both", "--no-report"]
    done = subprocess.run(argv, preexec_fn=_file_size_limit, capture_output=True, text=True, timeout=300)
    assert done.returncode == 2, done.stderr
    assert "Traceback" not in done.stderr
    assert f"bemcheck: error: {out / 'results.nc'}: File too large" in done.stderr
    assert_nothing_half_written(tmp_path, out)
    stored = len(list((out / "parts").glob("*.npz")))
    done = subprocess.run(argv, capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    progress = [line for line in done.stderr.splitlines() if line.startswith("[")]
    assert len(progress) == stored and all("(stored)" in line for line in progress)  # every task was kept


def test_file_size_limit_while_writing_band_meshes(tmp_path):
    """`bemcheck mesh` under a 2 kB file-size limit: the first band mesh (about
    5 kB of MSH 2.2 text for a 0.2 m box) cannot be written.  Exit 2 naming the
    file, no cut-short .msh and no temporary left (one used to stay, under a
    message saying nothing half-written was kept)."""
    case = tmp_path / "case.toml"
    case.write_text(
        BASE.replace("{mesh}", str(DATA / "octahedron.obj"))
        .replace('kind = "file"\npath', 'kind = "box"\nsize = [0.2, 0.2, 0.2]\n# path')
        .replace("at = [0.5, 0.0, 0.0]", "at = [0.6, 0.0, 0.0]")
        .replace("at = [-0.5, 0.0, 0.0]", "at = [-0.6, 0.0, 0.0]")
    )
    out = tmp_path / "meshes"

    def limit():
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
        resource.setrlimit(resource.RLIMIT_FSIZE, (2_000, 2_000))

    argv = [
        sys.executable,
        "-m",
        "bemcheck",
        "mesh",
        str(case),
        "--out",
        str(out),
        "--mesh-cache",
        str(tmp_path / "cache"),
    ]
    done = subprocess.run(argv, preexec_fn=limit, capture_output=True, text=True, timeout=300)
    assert done.returncode == 2, done.stderr
    assert "Traceback" not in done.stderr
    assert f"{out / 'band00_100-200Hz.msh'}: File too large" in done.stderr
    assert list(out.iterdir()) == []
    done = subprocess.run(argv, capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr
    assert sorted(p.name for p in out.iterdir()) == ["band00_100-200Hz.msh", "band00_100-200Hz.vtu"]


@pytest.mark.parametrize("damage", ["garbage", "cut short", "empty"])
def test_report_of_a_damaged_results_file(damage, tmp_path, capsys):
    """`bemcheck report` on a folder whose results.nc is not whole: exit 2 naming the
    file, no traceback, no report written.  A NetCDF-4 file is an HDF5 file, which
    starts with an 8-byte signature and records its end-of-file address in its
    superblock (HDF5 File Format Specification 3.0, sec. II.A), so garbage and a
    cut-short copy are both recognised on opening."""
    case = tmp_path / "case.toml"
    case.write_text(FREE_CASE)
    out = tmp_path / "out"
    assert main(["run", str(case), "--out", str(out), "--model", "free", "--no-report"]) == 0
    results_file = out / results.RESULTS_FILE
    whole = results_file.read_bytes()
    results_file.write_bytes(
        {"garbage": b"\x89not NetCDF\x00" * 500, "cut short": whole[: len(whole) // 2], "empty": b""}[damage]
    )
    capsys.readouterr()
    code = main(["report", str(out)])
    err = capsys.readouterr().err
    assert code == 2, err
    assert "Traceback" not in err
    assert f"bemcheck: error: {results_file}: cannot be read as a results file" in err, err
    assert not (out / "report.html").exists()


def test_check_refuses_a_bell_its_script_cannot_build(tmp_path, capsys):
    """`bemcheck check` answers as the run does (it printed "valid case" for a bell the mesher refuses)."""
    case = tmp_path / "case.toml"
    case.write_text(
        BASE.replace(
            'kind = "file"\npath',
            'kind = "bell"\nmouth_radius = 0.46\nthroat_radius = 0.006\nlength = 2.3\nflare = 0.035\n'
            "rim_radius = 0.013\n# path",
        )
    )
    assert main(["check", str(case)]) == 2
    err = capsys.readouterr().err
    assert f"{case}: body[0] 'cab': rim_radius 0.013 m is too large for this bell" in err and "Traceback" not in err
