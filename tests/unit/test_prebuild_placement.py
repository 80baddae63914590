"""The placement study's bookkeeping: which controls move with scattering, what is said when
nothing can be computed, how stored parts are keyed, and the required-vs-available plot."""

import dataclasses
import functools

import numpy as np
import pytest
from matplotlib.lines import Line2D

import bemcheck
from bemcheck.case import parse_case
from bemcheck.case.model import Medium
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.observers import for_observers
from bemcheck.prebuild import placement_spread
from bemcheck.prebuild.check import before_build, harmonic_plan
from bemcheck.prebuild.scattered import StoredSolve
from bemcheck.report.figures import volume_velocity_figure
from bemcheck.report.style import styled
from bemcheck.run import sweep
from bemcheck.run.runner import run_case
from bemcheck.run.sweep import plan_tasks
from bemcheck.solvers.freefield import impedance_matrix
from bemcheck.solvers.response import free_response
from tests.support.image_source import image_task

AIR = Medium(343.0, 1.21)

LAYOUT = """
[case]
title = "placement bookkeeping (invented)"
[frequencies]
list = [100.0, 200.0]
[mesh]
band_octaves = 2
{bodies}
[[source]]
name = "p"
role = "primary"
at = [0.0, 0.0, 0.3]
strength = 1e-3
{controls}
[[note]]
name = "n"
fundamental = 100.0
spl_at_1m = [80.0, 74.0]
[build]
trials = 40
"""
BOX = """
[[body]]
name = "cab"
kind = "box"
at = [0.4, 0.0, 0.3]
axis = [-1.0, 0.0, 0.0]
size = [0.1, 0.1, 0.1]
"""
CAB_CONTROL = """
[[source]]
name = "on_cab"
role = "control"
on = "cab"
radiator = "piston"
position_tolerance = 0.004
"""
FREE_CONTROL = """
[[source]]
name = "loose"
role = "control"
at = [-0.15, 0.05, 0.3]
position_tolerance = 0.002
"""


def layout(bodies="", controls=FREE_CONTROL):
    return parse_case(LAYOUT.format(bodies=bodies, controls=controls))


def check_of(case, surface_at):
    """before_build with the free field standing in for every model (the bookkeeping is under test)."""
    d = for_observers(case.observers.far_field)
    x = np.array([s.position for s in case.sources])

    def free_at(f):
        return free_response(f, case.medium, x, d.unit, np.zeros((0, 3)))

    return before_build(case, free_at, free_at, surface_at)


def no_surface(f):
    """The note levels ask every harmonic's stored solve for the primary's field; none here."""
    return "stand-in: no surface solution"


def test_controls_on_cabinets_are_never_given_a_scattered_spread():
    """A piston on a cabinet's face moves with its cabinet: no scattered figure, the reason
    said, the free-field figure kept and labelled as such, no go/no-go item invented."""
    case = layout(BOX, CAB_CONTROL)
    build = check_of(case, no_surface)
    ps = build.summary["placement_scattered"]
    assert ps["moved"] == [] and ps["held"][0]["source"] == "on_cab"
    assert "piston on cab's driver face" in ps["held"][0]["why"]
    for row in ps["rows"]:
        assert row["scattered"] is None and not row["scattered_spread"]
        assert "moves with a body" in row["reason"] and "new BEM solve" in row["reason"]
        assert row["free"]["p5_db"] is not None
    checks = [i["check"] for i in build.summary["items"]]
    assert any(c.startswith("placement (free field, every control moved)") for c in checks)
    assert not any("placement with scattering" in c for c in checks)
    assert sum("not computed" in line for line in build.lines) == 2
    assert not build.dataset["placement_scattered_computed"].values.any()
    assert not build.dataset["placement_scattered_moves"].values.any()


def test_mixed_layout_moves_the_free_standing_control_only():
    """The free-standing point moves, the cabinet's piston is held and named; the free field is
    given twice: every control moved, and the same moves as with scattering."""
    case = layout(BOX, CAB_CONTROL + FREE_CONTROL)
    build = check_of(case, lambda f: "stand-in: no surface here")
    ps = build.summary["placement_scattered"]
    assert ps["moved"] == ["loose"] and [h["source"] for h in ps["held"]] == ["on_cab"]
    assert ps["tolerance_m"] == 0.004
    for row in ps["rows"]:
        assert row["reason"] == "stand-in: no surface here" and row["scattered"] is None
        assert row["same_moves_free"]["p5_db"] != row["free"]["p5_db"]
    assert any("holds on_cab where designed" in line for line in build.lines)
    moves = build.dataset["placement_scattered_moves"]
    assert moves.sel(source="loose") and not moves.sel(source="on_cab") and not moves.sel(source="p")


def test_a_held_control_stays_exactly_where_designed():
    """Weight 0 holds a control: every position the impedances are asked for has it at its
    design position, while the other control moves within its tolerance."""
    seen = []

    def z_at(x):
        seen.append(np.array(x))
        return impedance_matrix(150.0, AIR, x)

    xc = np.array([[0.1, 0.0, 0.0], [-0.1, 0.05, 0.0]])
    placement_spread(z_at, [[0, 0, 0]], [1.0], xc, [-0.5, -0.4], 0.01, trials=30, rng=1, weights=[1.0, 0.0])
    moved = np.array([x[1] for x in seen[1:]])
    held = np.array([x[2] for x in seen[1:]])
    assert (held == xc[1]).all()
    assert 0 < np.linalg.norm(moved - xc[0], axis=1).max() <= 0.01


@pytest.mark.parametrize("weights", [[1.0], [1.0, -0.5], [0.0, 0.0], [1.0, np.nan]])
def test_bad_weights_are_refused(weights):
    xc = [[0.1, 0.0, 0.0], [-0.1, 0.0, 0.0]]
    with pytest.raises(ValueError, match="weights"):
        placement_spread(
            lambda x: impedance_matrix(150.0, AIR, x),
            [[0, 0, 0]],
            [1.0],
            xc,
            [-0.5, -0.4],
            0.01,
            trials=5,
            weights=weights,
        )


def test_a_sweep_without_surface_solutions_says_so(tmp_path):
    """Parts from a solver that keeps no surface solution (here the image-source stand-in):
    the study with scattering is not computed and says why; the free-field figures stand."""
    case = layout()
    run = run_case(
        case,
        tmp_path,
        model="both",
        solve=functools.partial(image_task, case),
        bands=(Band(0, 100.0, 200.0, 0.1),),
        quiet=True,
    )
    ps = run.summary["before_build"]["placement_scattered"]
    assert ps["moved"] == ["loose"]
    assert all(r["reason"] == "the sweep's stored parts hold no surface solution" for r in ps["rows"])
    assert all(r["scattered"] is None for r in ps["rows"])
    ds = bemcheck.load_results(tmp_path)
    assert not ds["placement_scattered_computed"].values.any()
    assert (ds["placement_scattered_db"].values == 0).all() and ds["placement_free_computed"].values.all()


@dataclasses.dataclass(frozen=True)
class Band:
    index: int
    f_low: float
    f_high: float
    element_size: float


def test_the_part_format_enters_every_task_key(monkeypatch):
    """Parts written in another layout get other keys, so a rerun never misreads them."""
    case = layout()
    bands = (Band(0, 100.0, 200.0, 0.1),)
    harmonics = [f for _, _, f in harmonic_plan(case)]
    now = [t.key for t in plan_tasks(case, bands, harmonics)]
    monkeypatch.setattr(sweep, "PART_FORMAT", sweep.PART_FORMAT - 1)
    before = [t.key for t in plan_tasks(case, bands, harmonics)]
    assert len(now) == len(before) and not set(now) & set(before)


def test_a_piston_cannot_be_moved_through_a_stored_solve():
    """A velocity source is part of the scatterer: asking for it moved is refused."""
    none = SurfaceMesh(np.zeros((0, 3)), np.zeros((0, 3), int), np.zeros(0, int))
    stored = StoredSolve(
        100.0,
        np.zeros((1, 3)),
        np.zeros((2, 2), complex),
        np.zeros((0, 2), complex),
        np.zeros((0, 1)),
        none,
        np.array([0, 1]),
        np.array([[0.0, 0, 0], [0.5, 0, 0]]),
    )
    assert stored.movable.tolist() == [True, False]
    assert stored.clearance().tolist() == [np.inf, 0.0]
    z_at = stored.impedance_at(AIR, [0, 1])
    with pytest.raises(ValueError, match="piston"):
        z_at(np.array([[0.0, 0, 0], [0.5, 0.001, 0]]))


TINY = """
[[source]]
name = "c"
role = "control"
at = [0.1, 0.3, 0.0]
driver = "tiny"
position_tolerance = 0.002
[[driver]]
name = "tiny"
re = 6.0
bl = 3.0
mms = 0.003
cms = 0.0005
rms = 0.5
sd = 0.0015
xmax = 0.0005
vb = 0.0005
rated_power = 2.0
"""


def test_required_and_available_volume_velocity_plot(tmp_path):
    """The plot's curves and markers are the numbers themselves: Q_max = Sd·xmax·ω (the cone's
    swept volume per cycle; Small, 'Closed-box loudspeaker systems, Part I', JAES 20(10),
    1972) by hand, and the required |q_c| = |sinc(kd)| q_p for one control at distance d
    (Nelson, Curtis, Elliott & Bullmore 1987, J. Sound Vib. 116(3) 397-414) with q_p from the
    note's SPL at 1 m, |p| = ωρ q/(4π·1 m) (Kinsler, Frey, Coppens & Sanders, Fundamentals of
    Acoustics, 2000, ch. 7).  The page shows it in its before-build section, as PNG and SVG."""
    text = LAYOUT.format(bodies="", controls=TINY).replace("at = [0.0, 0.0, 0.3]", "at = [0.1, 0.2, 0.0]")
    case = parse_case(text)
    run = run_case(case, tmp_path, model="free", report=True)
    ds = bemcheck.load_results(tmp_path)
    with styled():
        fig = volume_velocity_figure(ds, case)
    ax = fig.axes[0]
    lines = {ln.get_label(): ln for ln in ax.get_lines() if isinstance(ln, Line2D)}
    f, q_max = lines["available within xmax (Sd·xmax·ω)"].get_data()
    np.testing.assert_allclose(q_max, 0.0015 * 0.0005 * 2 * np.pi * f, rtol=1e-12)
    f_h, q_req = lines["n: required as designed"].get_data()
    np.testing.assert_allclose(f_h, [100.0, 200.0])
    rho, c = case.medium.density, case.medium.speed_of_sound
    p_rms = 20e-6 * 10 ** (np.array([80.0, 74.0]) / 20)
    q_p = np.sqrt(2) * p_rms * 4 * np.pi / (2 * np.pi * f_h * rho)
    kd = 2 * np.pi * f_h / c * 0.1
    np.testing.assert_allclose(q_req, np.abs(np.sinc(kd / np.pi)) * q_p, rtol=1e-9)
    page = run.report.read_text(encoding="utf-8")
    section = page.split('<section id="before-build">')[1].split("</section>")[0]
    assert 'id="fig-volume_velocity"' in section and "excursion limit" in section
    assert 'id="fig-volume_velocity"' not in page.split('<section id="figures">')[1].split("</section>")[0]
    assert (tmp_path / "figures" / "volume_velocity.png").stat().st_size > 0
    assert (tmp_path / "figures" / "volume_velocity.svg").stat().st_size > 0
    assert "Placement tolerance" in section and "<td>scattered</td>" in section


def test_volume_velocity_figure_draws_the_amplifier_channel(tmp_path):
    """A control fed by an [[amplifier]] gets the channel's curve: on it the drive meets the rated RMS
    voltage or current (peak = √2 × RMS) and neither is exceeded."""
    from bemcheck.prebuild.drivers import drive_for

    amplifier = '[[amplifier]]\nname = "amp"\nrated_voltage_rms = 2.0\nrated_current_rms = 0.3\ncontrols = ["c"]\n'
    text = LAYOUT.format(bodies="", controls=TINY + amplifier).replace("at = [0.0, 0.0, 0.3]", "at = [0.1, 0.2, 0.0]")
    case = parse_case(text)
    run_case(case, tmp_path, model="free", report=False)
    ds = bemcheck.load_results(tmp_path)
    with styled():
        fig = volume_velocity_figure(ds, case)
    lines = {ln.get_label(): ln for ln in fig.axes[0].get_lines() if isinstance(ln, Line2D)}
    f, q_amp = lines["available from the amplifier channel"].get_data()
    drive = drive_for(case.drivers[0], f, q_amp, case.medium)
    use = np.maximum(np.abs(drive.voltage) / (np.sqrt(2) * 2.0), np.abs(drive.current) / (np.sqrt(2) * 0.3))
    np.testing.assert_allclose(use, 1.0, rtol=1e-12)
