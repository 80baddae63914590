"""The verdict judges the controlled system by its attenuation, checked in worlds known exactly.

References:
* the rigid sphere's series for a monopole beside it (Duda & Martens 1998,
  JASA 104(5) 3048-3058; Bowman, Senior & Uslenghi 1987, Electromagnetic and
  Acoustic Scattering by Simple Shapes, sec. 10.3), see tests/support/sphere_world.py;
* the power of a set of monopoles W = ½ Re qᴴ Z q and the minimum-power
  strengths (Nelson, Curtis, Elliott & Bullmore 1987, J. Sound Vib. 116(3)
  397-414, eqs. 2.9 and 3.4).
"""

import numpy as np
import pytest

from bemcheck.case import parse_case
from bemcheck.compare.verdict import verdict_lines
from bemcheck.observers import for_observers
from bemcheck.results.combine import combine
from bemcheck.results.verdict_summary import verdict_from_summary
from bemcheck.run.runner import free_responses, run_case
from tests.support.sphere_world import sphere_response

PAIR = """
[case]
title = "a primary and a control beside a rigid sphere (invented test case)"
[frequencies]
{frequencies}
[mesh]
elements_per_wavelength = 6
band_octaves = {octaves}
{body}
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.0]
strength = 1e-3
[[source]]
name = "c"
role = "control"
at = [0.0, 0.02, 0.0]
[observers]
far_field = {{ plane = "xy", step_deg = 5.0 }}
[tolerance]
sectors = [ {{ name = "all", from_deg = 0.0, to_deg = 360.0 }}, {{ name = "front", from_deg = -45.0, to_deg = 45.0 }} ]
"""
SPHERE = '[[body]]\nname = "ball"\nkind = "sphere"\nat = [{x}, 0.0, 0.0]\nradius = {a}\n'


def exact_run(radius, centre, stop, tolerance=""):
    """Results and verdict of the pair beside a sphere, the 'BEM' answered by the exact series.

    ``tolerance``: keys added to the case's [tolerance] table.
    """
    text = PAIR.format(frequencies=f"start = 100.0\nstop = {stop}\nper_octave = 6", octaves=1, body="")
    case = parse_case(text.replace("[tolerance]\n", f"[tolerance]\n{tolerance}\n"))
    d = for_observers(case.observers.far_field)
    free = free_responses(case, d)
    x = np.array([s.position for s in case.sources])
    bem = [sphere_response(f, case.medium, [centre, 0.0, 0.0], radius, x, d.unit) for f in case.frequencies]
    return combine(case, d, free, bem)


def test_a_weak_scatterer_passes():
    """A 6 cm sphere 0.4 m from a pair 2 cm apart, 100-400 Hz: each field departs by at most
    a few tenths of a dB and the attenuation as designed equals the prediction (series), so
    the design holds: PASS, with no sector failing at the bottom of the band."""
    ds, v = exact_run(0.06, 0.4, 400.0)
    assert np.abs(ds["attenuation_as_designed_db"] - ds["attenuation_free_db"]).max() < 0.05
    np.testing.assert_allclose(ds["attenuation_free_db"].values[[0, 4, 8, 12]], [33.5, 29.5, 25.5, 21.5], atol=0.06)
    assert v.outcome == "PASS" and v.first_departure_hz is None


def test_a_strong_scatterer_fails_inside_the_band_not_at_its_bottom():
    """A 0.3 m sphere 0.1 m from the pair, 100-1600 Hz: the series' attenuation as designed
    falls short of the prediction by more than the tolerated 3 dB only where the prediction
    is no longer capped by the 10 dB target, i.e. inside the band; the bottom agrees."""
    ds, v = exact_run(0.3, 0.4, 1600.0)
    assert v.outcome == "FAIL"
    f = ds["frequency"].values
    assert f[0] < v.first_departure_hz < f[-1]
    assert (ds["status"].sel(signal="controlled").values[0] == 0).all()


def _series_attenuations(case, radius, centre, directions):
    """Predicted and as-designed attenuation, per direction (F, D) and in power (F,), from outside formulas.

    Two monopoles r = 0.02 m apart, the control fed q_c = −q_p sin(kr)/(kr), the free-field
    minimum-power optimum (Nelson, Curtis, Elliott & Bullmore 1987, eq. 3.4 with
    Re Z_cp / Re Z_cc = sin(kr)/(kr)); predicted power attenuation −10 log10(1 − sinc²(kr))
    (ibid.); free far fields (−iωρ/4π) e^{−ik d·x}; with the sphere, far fields and power form
    from the exact series (tests/support/sphere_world.py).
    """
    x = np.array([s.position for s in case.sources])
    c, rho = case.medium.speed_of_sound, case.medium.density
    r = float(np.linalg.norm(x[1] - x[0]))
    pred_d, des_d, pred_w, des_w = [], [], [], []
    for f in case.frequencies:
        k = 2 * np.pi * f / c
        q = np.array([1.0, -np.sin(k * r) / (k * r)])
        free = -1j * 2 * np.pi * f * rho / (4 * np.pi) * np.exp(-1j * k * directions.unit @ x.T)
        world = sphere_response(f, case.medium, [centre, 0.0, 0.0], radius, x, directions.unit)
        pred_d.append(20 * np.log10(np.abs(free[:, 0]) / np.abs(free @ q)))
        des_d.append(20 * np.log10(np.abs(world.far_field[:, 0]) / np.abs(world.far_field @ q)))
        pred_w.append(-10 * np.log10(1 - np.sinc(k * r / np.pi) ** 2))
        p = world.power_matrix
        des_w.append(10 * np.log10(np.real(p[0, 0]) / np.real(q.conj() @ p @ q)))
    return np.array(pred_d), np.array(des_d), np.array(pred_w), np.array(des_w)


@pytest.mark.parametrize(("target", "tolerated"), [(10.0, 3.0), (20.0, 1.0), (30.0, 6.0), (10.0, 20.0), (40.0, 0.5)])
def test_the_judgement_follows_the_target_and_the_tolerated_shortfall(target, tolerated):
    """With the series as the BEM (no numerical error), a direction and a frequency's power
    depart exactly where min(predicted, attenuation_target_db) − as designed exceeds
    attenuation_db, and agree elsewhere; the two case keys move the verdict as they say (the
    first departure moves with them, a shortfall of 20 dB tolerated passes, a target of 40 dB
    with 0.5 dB tolerated fails in power as well)."""
    keys = f"attenuation_target_db = {target}\nattenuation_db = {tolerated}"
    ds, v = exact_run(0.3, 0.4, 1600.0, tolerance=keys)
    case = parse_case(PAIR.format(frequencies="start = 100.0\nstop = 1600.0\nper_octave = 6", octaves=1, body=""))
    d = for_observers(case.observers.far_field)
    pred_d, des_d, pred_w, des_w = _series_attenuations(case, 0.3, 0.4, d)
    np.testing.assert_allclose(ds["attenuation_free_db"].values, pred_w, atol=1e-6)
    np.testing.assert_allclose(ds["attenuation_as_designed_db"].values, des_w, atol=1e-6)
    departs = np.minimum(pred_d, target) - des_d > tolerated
    assert ds["significant"].sel(signal="controlled").values.all()
    assert np.array_equal(ds["status"].sel(signal="controlled").values == 2, departs)
    assert np.array_equal(ds["status"].sel(signal="controlled").values == 0, ~departs)
    power_departs = np.minimum(pred_w, target) - des_w > tolerated
    assert np.array_equal(ds["attenuation_as_designed_status"].values == 2, power_departs)
    f = ds["frequency"].values
    first = f[departs.any(axis=1)]
    assert v.first_departure_hz == (float(first[0]) if first.size else None)
    assert v.outcome == ("FAIL" if departs.any() or power_departs.any() else "PASS")


def test_a_better_attenuation_than_predicted_is_reported_not_failed():
    """Swapping the models' roles turns every shortfall into a surplus: the judgement is
    one-sided (only a shortfall beyond the tolerance departs)."""
    from bemcheck.compare.trust import judge_shortfall, shortfall_db

    short = shortfall_db(np.array([5.0, 30.0]), np.array([12.0, 40.0]), 10.0)
    assert (short < 0).all() and (judge_shortfall(short, 0.5, 3.0) == 0).all()


@pytest.fixture(scope="module")
def sphere_bem(tmp_path_factory):
    """The pair beside a 0.1 m sphere 0.25 m away, solved by bemcheck's BEM at 200, 400, 800 Hz."""
    root = tmp_path_factory.mktemp("sphere-pair")
    case = parse_case(
        PAIR.format(frequencies="list = [200.0, 400.0, 800.0]", octaves=4, body=SPHERE.format(x=0.25, a=0.1))
    )
    out = run_case(case, root / "run", quiet=True, cache_dir=root / "cache")
    import bemcheck

    return case, bemcheck.load_results(out.folder), out.summary["verdict"]


def test_attenuation_with_scattering_matches_the_series_within_its_error(sphere_bem):
    """Power and directional attenuation as designed and re-optimised from the BEM against
    the series world, each within twice its own numerical error estimate (plus 0.02 dB
    for the series' and the power rule's own rounding)."""
    case, ds, _ = sphere_bem
    d = for_observers(case.observers.far_field)
    x = np.array([s.position for s in case.sources])
    exact = [sphere_response(f, case.medium, [0.25, 0.0, 0.0], 0.1, x, d.unit) for f in case.frequencies]
    ref, _ = combine(case, d, free_responses(case, d), exact)
    for name in ("attenuation_as_designed_db", "attenuation_reoptimised_db"):
        err = ds[name.replace("_db", "_error_db")].values
        assert (np.abs(ds[name].values - ref[name].values) <= 2.0 * err + 0.02).all(), name
    for name in ("directional_attenuation_as_designed_db", "directional_attenuation_reoptimised_db"):
        err = ds[name.replace("_db", "_error_db")].values
        judged = ds["significant"].sel(signal="controlled").values
        gap = np.abs(ds[name].values - ref[name].values)
        assert (gap[judged] <= 2.0 * err[judged] + 0.02).all()


def test_impedance_error_bounds_the_true_error(sphere_bem):
    """Transfer impedances of the pair beside the sphere against the series' Z_ij = −iωρ (G + G_s)
    (Duda & Martens 1998, eq. 2; the free diagonal its radiation resistance ρck²/4π, Nelson et
    al. 1987, eq. 2.9): at every frequency the BEM's error is at most twice its stated
    z_bem_error, taken as the largest over the matrix (a chance agreement of one entry on the
    two meshes cannot shrink it)."""
    case, ds, _ = sphere_bem
    d = for_observers(case.observers.far_field)
    x = np.array([s.position for s in case.sources])
    for i, f in enumerate(case.frequencies):
        exact = sphere_response(f, case.medium, [0.25, 0.0, 0.0], 0.1, x, d.unit).impedance
        got = ds["z_bem"].values[i]
        true = np.abs(got - exact).max()
        estimate = float(ds["z_bem_error"].values[i].max())
        assert 0.0 < true <= 2.0 * estimate, (f, true, estimate)
        # the scattered part is what the BEM adds: its error is small beside it
        scattered = np.abs(exact - ds["z_free"].values[i]).max()
        assert estimate < 0.2 * scattered, (f, estimate, scattered)


def test_sources_on_no_body_have_no_source_model_term(sphere_bem):
    """Neither source of the pair sits on the sphere: with only its own body (none) each is a free
    monopole, so the source-model term is zero (identity) and the whole departure, and the whole
    loss of attenuation, is the diffraction by the other body."""
    _, ds, summary = sphere_bem
    np.testing.assert_allclose(ds["source_model_level_db"].values, 0.0, atol=1e-9)
    np.testing.assert_allclose(ds["source_model_phase_deg"].values, 0.0, atol=1e-9)
    np.testing.assert_array_equal(ds["other_bodies_level_db"].values, ds["level_departure_db"].values[:, :-1])
    ms = ds["sector_attenuation_db"]
    np.testing.assert_allclose(ms.sel(world="own_body").values, ms.sel(world="predicted").values, atol=1e-9)
    assert ms.sel(world="as_designed").values.min() < ms.sel(world="predicted").values.max()
    lines = verdict_lines(verdict_from_summary(summary))
    assert any("of which 0.0 dB source model" in line for line in lines), lines


def test_subset_run_gives_the_same_numbers_bit_for_bit(sphere_bem, tmp_path):
    """A run of one frequency meshes as the whole case does, so every number at it is identical."""
    case, full, _ = sphere_bem
    out = run_case(case, tmp_path / "subset", frequencies=(400.0,), quiet=True, cache_dir=tmp_path / "cache")
    import bemcheck

    sub = bemcheck.load_results(out.folder)
    for name in (
        "p_bem",
        "z_bem",
        "attenuation_as_designed_db",
        "attenuation_as_designed_error_db",
        "level_error_db",
        "directional_attenuation_as_designed_db",
        "status",
    ):
        assert np.array_equal(sub[name].values[0], full[name].sel(frequency=400.0).values), name


def test_no_bodies_means_zero_departures_pass_and_zero_decomposition(tmp_path):
    """Without bodies the BEM answers the free field: every departure and both
    decomposition terms are zero, no numerical error, PASS (identity)."""
    case = parse_case(PAIR.format(frequencies="list = [200.0, 400.0]", octaves=1, body=""))
    out = run_case(case, tmp_path, quiet=True)
    import bemcheck

    ds = bemcheck.load_results(out.folder)
    for name in (
        "level_departure_db",
        "phase_departure_deg",
        "source_model_level_db",
        "source_model_phase_deg",
        "other_bodies_level_db",
        "other_bodies_phase_deg",
        "numerical_error_db",
        "attenuation_as_designed_error_db",
        "attenuation_loss_db",
    ):
        np.testing.assert_allclose(ds[name].values, 0.0, atol=1e-9, err_msg=name)
    np.testing.assert_allclose(
        ds["directional_attenuation_as_designed_db"].values,
        ds["directional_attenuation_predicted_db"].values,
        atol=1e-9,
    )
    assert (ds["status"].values == 0).all()
    assert out.summary["verdict"]["outcome"] == "PASS"


ONE = """
[case]
title = "a monopole beside a rigid sphere, ka 0.5 to 6 (invented test case)"
[frequencies]
list = [{frequencies}]
[mesh]
elements_per_wavelength = 6
band_octaves = 1
[[body]]
name = "ball"
kind = "sphere"
radius = 0.1
[[source]]
name = "p"
role = "primary"
at = [0.2, 0.0, 0.0]
strength = 1e-3
[observers]
far_field = {{ plane = "xy", step_deg = 5.0 }}
"""


def test_error_estimate_bounds_the_true_error_on_the_sphere(tmp_path):
    """A monopole 0.1 m off a 0.1 m rigid sphere, ka = 0.5 to 6 on meshes of 6 elements per
    wavelength at each octave band's top: the true far-field error against the exact series
    (Duda & Martens 1998) is at most twice the estimate at every frequency, in amplitude and
    in level wherever the field is not in a deep null."""
    import bemcheck

    c = 343.0
    ka = np.array([0.5, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0])
    freqs = ka * c / (2 * np.pi * 0.1)
    case = parse_case(ONE.format(frequencies=", ".join(repr(float(f)) for f in freqs)))
    out = run_case(case, tmp_path / "run", quiet=True, cache_dir=tmp_path / "cache")
    ds = bemcheck.load_results(out.folder)
    d = for_observers(case.observers.far_field)
    for i, f in enumerate(case.frequencies):
        exact = sphere_response(f, case.medium, [0.0, 0.0, 0.0], 0.1, [[0.2, 0.0, 0.0]], d.unit).far_field[:, 0]
        got = ds["p_bem"].values[i, 0]
        true = np.abs(got - exact).max()
        estimate = float(ds["far_field_error"].values[i, 0])
        assert true <= 2.0 * estimate, (ka[i], true, estimate)
        level_true = np.abs(20 * np.log10(np.abs(got) / np.abs(exact)))
        judged = ds["significant"].values[i, 0]
        assert (level_true[judged] <= 2.0 * ds["level_error_db"].values[i, 0][judged]).all(), ka[i]


TWO = """
[case]
title = "a monopole on one sphere beside another (invented test case)"
[frequencies]
list = [300.0, 600.0, 1000.0]
[mesh]
elements_per_wavelength = 6
band_octaves = 4
[[body]]
name = "own"
kind = "sphere"
radius = 0.1
axis = [1.0, 0.0, 0.0]
[[body]]
name = "other"
kind = "sphere"
at = [0.0, 0.4, 0.0]
radius = 0.1
[[source]]
name = "p"
role = "primary"
on = "own"
strength = 1e-3
[observers]
far_field = { plane = "xy", step_deg = 5.0 }
"""


def test_decomposition_on_two_spheres(tmp_path):
    """A monopole 0.02 m off sphere 'own' (on its +x side), a second sphere 0.4 m away.
    The source-model term (the source with its own sphere alone against a free monopole)
    equals the one-sphere series (Duda & Martens 1998) in level and phase within twice the
    BEM's error estimate (plus 0.05 dB, 0.5°); the other-bodies term equals the full solve
    against that series, within the same; and the two terms add up to the full solve's
    departure from the free monopole, level and phase (20 log10 and arg of a product of ratios)."""
    import bemcheck

    case = parse_case(TWO)
    out = run_case(case, tmp_path / "run", quiet=True, cache_dir=tmp_path / "cache")
    ds = bemcheck.load_results(out.folder)
    d = for_observers(case.observers.far_field)
    x0 = np.array(case.sources[0].position)
    for i, f in enumerate(case.frequencies):
        one = sphere_response(f, case.medium, [0.0, 0.0, 0.0], 0.1, [x0], d.unit).far_field[:, 0]
        free = ds["p_free"].values[i, 0]
        bem = ds["p_bem"].values[i, 0]
        err = ds["level_error_db"].values[i, 0]
        err_deg = ds["phase_error_deg"].values[i, 0]
        series_db = 20 * np.log10(np.abs(one) / np.abs(free))
        got = ds["source_model_level_db"].values[i, 0]
        assert (np.abs(got - series_db) <= 2.0 * err + 0.05).all(), f
        got_deg = ds["source_model_phase_deg"].values[i, 0]
        assert (np.abs(_wrap(got_deg - np.degrees(np.angle(one / free)))) <= 2.0 * err_deg + 0.5).all(), f
        # the other-bodies term is the full solve against that series, not against the block solve
        other_db = 20 * np.log10(np.abs(bem) / np.abs(one))
        assert (np.abs(ds["other_bodies_level_db"].values[i, 0] - other_db) <= 2.0 * err + 0.05).all(), f
    # the full solve's own departure from the free monopole, taken from p_bem and p_free
    total = 20 * np.log10(np.abs(ds["p_bem"].values[:, 0]) / np.abs(ds["p_free"].values[:, 0]))
    total_deg = np.degrees(np.angle(ds["p_bem"].values[:, 0] / ds["p_free"].values[:, 0]))
    np.testing.assert_allclose(
        ds["source_model_level_db"].values[:, 0] + ds["other_bodies_level_db"].values[:, 0], total, atol=1e-9
    )
    summed = ds["source_model_phase_deg"].values[:, 0] + ds["other_bodies_phase_deg"].values[:, 0]
    np.testing.assert_allclose(_wrap(summed - total_deg), 0.0, atol=1e-9)
    assert np.abs(ds["other_bodies_level_db"].values).max() > 0.1  # the other sphere does scatter


def _wrap(deg):
    """Angles [deg] wrapped to (−180, 180]."""
    return -((-np.asarray(deg) + 180.0) % 360.0 - 180.0)


def test_rules_of_thumb_say_what_each_length_is_and_where_it_falls():
    """ka = 0.5 with a the body's bounding radius (common practice, no source): for the
    demo's bell, a = sqrt(mouth_radius² + length²) = sqrt(0.09² + 0.35²) m, so 343 × 0.5 /
    (2π a) = 75.5 Hz, below the 100-898 Hz band; kd = π with d the distance to the nearest
    primary (Nelson et al. 1987) at c / 2d."""
    import bemcheck
    from bemcheck.compare import rules_of_thumb

    case = bemcheck.load_case(bemcheck.example_path("demo"))
    rows = {(r.rule, r.what): r for r in rules_of_thumb(case)}
    bell = rows[("ka = 0.5", "bell")]
    a = np.hypot(0.09, 0.35)
    assert bell.length_m == pytest.approx(a) and "bounding radius" in bell.length
    assert bell.frequency_hz == pytest.approx(0.5 * 343.0 / (2 * np.pi * a)) and bell.in_band == "below the band"
    stand = rows[("kd = π", "ctl_stand")]
    d = np.linalg.norm(np.subtract(case.sources[4].position, case.sources[0].position))
    assert stand.frequency_hz == pytest.approx(343.0 / (2 * d)) and stand.in_band == "above the band"
