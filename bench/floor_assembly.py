"""What a rigid floor costs the BEM assembly: the demo's band mesh with and without the image terms.

    .venv/bin/python bench/floor_assembly.py [--repeat 3]

Meshes cases/demo.toml's first band (through the mesh cache), compiles the
kernels on a small sphere, then times at the band's top frequency, best of
``--repeat``: the free-space matrix ½M - K + ηW (``burton_miller_matrix``,
regular and touching pairs) and the image part (``add_image_part``, every
pair of triangles against its mirror image) for a floor 0.3 m below the
lowest point of the scene (an invented height).  Prints one JSON object with
the times [s], their ratio, the unknowns and the load average before and after.
"""

import argparse
import json
import os
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from bemcheck.case.floor import Floor  # noqa: E402
from bemcheck.case.load import load_case  # noqa: E402
from bemcheck.mesh import mesh_scene, plan_bands  # noqa: E402
from bemcheck.solvers import freefield  # noqa: E402
from bemcheck.solvers.bem.assembly import burton_miller_matrix  # noqa: E402
from bemcheck.solvers.bem.image import add_image_part  # noqa: E402
from bemcheck.solvers.bem.surface import surface_from_mesh  # noqa: E402
from bemcheck.solvers.bem.system import _grid  # noqa: E402
from tests.support.icosphere import icosphere  # noqa: E402


def _best(fn, repeat):
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def measure(repeat):
    load_before = os.getloadavg()
    case = load_case(ROOT / "cases" / "demo.toml")
    band = plan_bands(case)[0]
    surface = surface_from_mesh(mesh_scene(case, band.element_size))
    k = float(freefield.wavenumber(band.f_high, case.medium))
    eta = 1j / k
    floor = Floor(float(surface.vertices[:, 2].min()) - 0.3)
    small = surface_from_mesh(icosphere(0.2, 3))
    a = burton_miller_matrix(small, _grid(small), 5.0, 0.2j)  # compiles both passes
    add_image_part(a, small, 5.0, 0.2j, Floor(-0.5))
    grid = _grid(surface)
    free = _best(lambda: burton_miller_matrix(surface, grid, k, eta), repeat)
    out = np.zeros((surface.n_vertices, surface.n_vertices), complex)
    image = _best(lambda: add_image_part(out, surface, k, eta, floor), repeat)
    return {
        "triangles": int(surface.n_triangles),
        "unknowns": int(surface.n_vertices),
        "frequency_hz": band.f_high,
        "free_space_assembly_s": free,
        "image_part_s": image,
        "with_floor_over_without": (free + image) / free,
        "threads": int(os.environ.get("NUMBA_NUM_THREADS", os.cpu_count())),
        "load_before": load_before,
        "load_after": os.getloadavg(),
    }


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    print(json.dumps(measure(parser.parse_args(argv).repeat), indent=1))


if __name__ == "__main__":
    main()
