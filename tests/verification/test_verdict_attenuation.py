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
from bemcheck.observers import for_observers
from bemcheck.results.combine import combine
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


def exact_run(radius, centre, stop):
    """Results and verdict of the pair beside a sphere, the 'BEM' answered by the exact series."""
    case = parse_case(PAIR.format(frequencies=f"start = 100.0\nstop = {stop}\nper_octave = 6", octaves=1, body=""))
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
    for name in ("directional_attenuation_as_designed_db",):
        err = ds[name.replace("_db", "_error_db")].values
        judged = ds["significant"].sel(signal="controlled").values
        gap = np.abs(ds[name].values - ref[name].values)
        assert (gap[judged] <= 2.0 * err[judged] + 0.02).all()


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
        "source_model_level_db",
        "other_bodies_level_db",
        "numerical_error_db",
        "attenuation_as_designed_error_db",
    ):
        np.testing.assert_allclose(ds[name].values, 0.0, atol=1e-9, err_msg=name)
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
    equals the one-sphere series (Duda & Martens 1998) within twice the BEM's error
    estimate plus 0.05 dB, and the two terms add up to the full departure (20 log10 of
    a product of ratios)."""
    import bemcheck

    case = parse_case(TWO)
    out = run_case(case, tmp_path / "run", quiet=True, cache_dir=tmp_path / "cache")
    ds = bemcheck.load_results(out.folder)
    d = for_observers(case.observers.far_field)
    x0 = np.array(case.sources[0].position)
    for i, f in enumerate(case.frequencies):
        one = sphere_response(f, case.medium, [0.0, 0.0, 0.0], 0.1, [x0], d.unit).far_field[:, 0]
        free = ds["p_free"].values[i, 0]
        series_db = 20 * np.log10(np.abs(one) / np.abs(free))
        got = ds["source_model_level_db"].values[i, 0]
        err = ds["level_error_db"].values[i, 0]
        assert (np.abs(got - series_db) <= 2.0 * err + 0.05).all(), f
    total = ds["level_departure_db"].sel(signal="p").values
    np.testing.assert_allclose(
        ds["source_model_level_db"].values[:, 0] + ds["other_bodies_level_db"].values[:, 0], total, atol=1e-9
    )
    assert np.abs(ds["other_bodies_level_db"].values).max() > 0.1  # the other sphere does scatter


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
