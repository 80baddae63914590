"""A layout with no bodies: the BEM path must give back the free field exactly."""

import numpy as np

import bemcheck


def test_no_bodies_bem_equals_free(tmp_path):
    """With nothing to scatter the exterior problem's solution is the incident field
    (uniqueness of the exterior Helmholtz problem; Colton & Kress, Inverse Acoustic and
    Electromagnetic Scattering Theory, 1998, thm. 2.13, from memory): p_bem = p_free to
    1e-9, departures zero, as designed = re-optimised = predicted."""
    case = bemcheck.load_case(bemcheck.example_path("free-pair"))
    out = bemcheck.run_case(case, tmp_path, model="both", quiet=True)
    ds = bemcheck.load_results(tmp_path)
    for a, b in (("p_bem", "p_free"), ("p_bem_points", "p_free_points"), ("z_bem", "z_free")):
        np.testing.assert_allclose(ds[a].values, ds[b].values, rtol=1e-9, atol=0, err_msg=a)
    np.testing.assert_allclose(ds["level_departure_db"].values, 0.0, atol=1e-9)
    np.testing.assert_allclose(ds["attenuation_as_designed_db"], ds["attenuation_free_db"], rtol=1e-9)
    np.testing.assert_allclose(ds["attenuation_reoptimised_db"], ds["attenuation_free_db"], rtol=1e-9)
    assert out.summary["verdict"]["passed"]
