"""The self-check mesh is finer everywhere, the geometric bounds included."""

import bemcheck
from bemcheck.mesh import mesh_scene, plan_bands


def test_refined_scene_is_finer_everywhere(tmp_path):
    """Refining by 1.5 divides every edge bound by 1.5, so the element count grows by
    up to about 1.5² (area over edge², common practice, no source; less where the
    plain mesh was itself made finer to hold the volume) and the longest edge shrinks."""
    case = bemcheck.load_case(bemcheck.example_path("demo"))
    h = plan_bands(case)[0].element_size
    coarse = mesh_scene(case, h, cache_dir=tmp_path)
    fine = mesh_scene(case, h, cache_dir=tmp_path, refine=1.5)
    assert 1.2 < fine.n_triangles / coarse.n_triangles < 2.8
    assert fine.edge_lengths().max() <= coarse.edge_lengths().max() / 1.2
    assert fine.edge_lengths().min() < coarse.edge_lengths().min()
    assert abs(fine.enclosed_volume() - coarse.enclosed_volume()) < 0.01 * coarse.enclosed_volume()
