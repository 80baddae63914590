"""The demo's numerical error estimates cover what a finer mesh changes.

Reference: Richardson's estimate with the P1 rate (error ∝ h²; Sauter & Schwab,
Boundary Element Methods, 2011, ch. 4, from memory): the band mesh's error e_6
is estimated from a mesh 1.5 times coarser; a mesh of 10 elements per
wavelength errs by about (6/10)² e_6, so |u_6 − u_10| ≈ 0.64 e_6 ≤ e_6.
"""

import numpy as np
import pytest

import bemcheck
from bemcheck.case import parse_case
from bemcheck.run.runner import run_case

FREQUENCIES = (100.0, 400.0, 898.0)


@pytest.fixture(scope="module")
def demo_two_meshes(tmp_path_factory):
    root = tmp_path_factory.mktemp("demo-meshes")
    text = bemcheck.example_path("demo").read_text()
    runs = {}
    for epw in (6, 10):
        case = parse_case(text.replace("elements_per_wavelength = 6", f"elements_per_wavelength = {epw}"))
        chosen = tuple(f for f in case.frequencies if np.isclose(f, FREQUENCIES, rtol=1e-3).any())
        out = run_case(case, root / f"epw{epw}", frequencies=chosen, quiet=True, cache_dir=root / "cache")
        runs[epw] = bemcheck.load_results(out.folder)
    return runs


def test_attenuation_error_covers_a_finer_mesh(demo_two_meshes):
    """Power attenuation as designed and re-optimised at 6 elements per wavelength against
    10: the difference is within the error the 6-element run states."""
    coarse, fine = demo_two_meshes[6], demo_two_meshes[10]
    for name in ("attenuation_as_designed_db", "attenuation_reoptimised_db"):
        gap = np.abs(coarse[name].values - fine[name].values)
        assert (gap <= coarse[name.replace("_db", "_error_db")].values).all(), (name, gap)


def test_far_field_error_covers_a_finer_mesh(demo_two_meshes):
    """Every source's far-field level and phase at 6 elements per wavelength against 10,
    in every direction judged: within the stated level and phase errors."""
    coarse, fine = demo_two_meshes[6], demo_two_meshes[10]
    p6, p10 = coarse["p_bem"].values, fine["p_bem"].values
    judged = coarse["significant"].values[:, :-1]
    level = np.abs(20 * np.log10(np.abs(p6) / np.abs(p10)))
    phase = np.abs(np.degrees(np.angle(p6 * np.conj(p10))))
    assert (level[judged] <= coarse["level_error_db"].values[:, :-1][judged]).all()
    assert (phase[judged] <= coarse["phase_error_deg"].values[:, :-1][judged]).all()


def test_directional_attenuation_and_impedance_errors_cover_a_finer_mesh(demo_two_meshes):
    """The attenuation per direction (as designed and re-optimised, where the uncontrolled field
    is judged) and the transfer impedances at 6 elements per wavelength against 10: within the
    errors the 6-element run states (for the impedances the largest over the matrix at each
    frequency, as far-field errors are taken over directions)."""
    coarse, fine = demo_two_meshes[6], demo_two_meshes[10]
    judged = coarse["significant"].sel(signal="controlled").values
    for name in ("directional_attenuation_as_designed_db", "directional_attenuation_reoptimised_db"):
        gap = np.abs(coarse[name].values - fine[name].values)
        assert (gap[judged] <= coarse[name.replace("_db", "_error_db")].values[judged]).all(), name
    gap = np.abs(coarse["z_bem"].values - fine["z_bem"].values)
    assert (gap <= coarse["z_bem_error"].values.max(axis=(1, 2), keepdims=True)).all()
