"""Figures of a run, drawn from results made in an exactly known scattered world.

The scattered world is monopoles above an infinite rigid plane z = 0
(method of images: Morse & Ingard, Theoretical Acoustics, 1968, sec. 7.4),
built by tests/support/image_source.py and combined with the free-field
model exactly as a real run is.  The layout is invented for these tests.
"""

import numpy as np
import pytest
from matplotlib.collections import PolyCollection, QuadMesh
from matplotlib.patches import Rectangle

import bemcheck
from bemcheck.case import parse_case
from bemcheck.case.model import Tolerance
from bemcheck.compare.trust import NOT_RESOLVED
from bemcheck.mesh.surface import SurfaceMesh
from bemcheck.mesh.triangles import aspect_ratios
from bemcheck.observers import for_observers
from bemcheck.report import make_figures
from bemcheck.report.figures import attenuation_figure, departure_map_figure, polar_figure
from bemcheck.report.layout import layout_figure
from bemcheck.report.signals import plane_directions, polar_frequencies
from bemcheck.report.style import file_stem
from bemcheck.report.tables import mesh_rows
from bemcheck.results.combine import combine
from bemcheck.results.dataset import run_attributes
from bemcheck.run.runner import free_responses
from bemcheck.solvers.response import FieldResponse
from tests.support.image_source import image_response

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"
HEIGHT = 0.4  # primary's height above the rigid plane [m]

CASE = """
[case]
title = "Floor <test> & co: a primary and two controls above a rigid plane (invented)"
[frequencies]
start = 63.0
stop = 2000.0
per_octave = 3
[[source]]
name = "bell"
role = "primary"
at = [0.0, 0.0, {h}]
strength = 1e-3
[[source]]
name = "left"
role = "control"
at = [-0.2, 0.0, 0.35]
[[source]]
name = "right"
role = "control"
at = [0.2, 0.0, 0.45]
[observers]
far_field = {{ plane = "xz", step_deg = 5.0 }}
points = [ {{ name = "ear", at = [0.1, 0.2, 0.6] }} ]
[control]
objective = "power"
[tolerance]
level_db = 1.0
phase_deg = 15.0
sectors = [ {{ name = "front", from_deg = 10.0, to_deg = 90.0 }}, {{ name = "rear", from_deg = 90.0, to_deg = 170.0 }} ]
"""


def floor_run(error_scale=0.05, per_octave=3):
    """(case, results Dataset, verdict) of the invented layout above a rigid plane.

    A numerical error estimate growing as f² is attached so that some
    departures near the tolerance are 'not resolved'.  ``per_octave`` 6 gives
    30 frequencies, more rows than a report's table shows on screen at once.
    """
    case = parse_case(CASE.format(h=HEIGHT).replace("per_octave = 3", f"per_octave = {per_octave}"))
    d = for_observers(case.observers.far_field)
    free = free_responses(case, d)
    x = np.array([s.position for s in case.sources])
    pts = np.array([p.at for p in case.observers.points])
    bem = [image_response(f, case.medium, x, d.unit, pts) for f in case.frequencies]
    f = np.array(case.frequencies)
    # a check 'mesh' 1.5x coarser whose far fields differ by 1.25 times a relative error growing as f²
    rel = 10.0 ** (error_scale * (f / 500.0) ** 2 / 20.0) - 1.0
    check = [
        FieldResponse(
            r.frequency,
            r.far_field * (1.0 + 1.25 * e),
            r.points,
            r.impedance * (1.0 + 1.25 * e),
            r.power_matrix * (1.0 + 1.25 * e) ** 2,
        )
        for r, e in zip(bem, rel)
    ]
    ds, verdict = combine(case, d, free, bem, check, np.full(len(bem), 1.5))
    ds.attrs.update(run_attributes(case, "0123456789abcdef"))
    return case, ds, verdict


def free_run():
    """Results of the shipped free-pair example, free-field model only."""
    case = bemcheck.load_case(bemcheck.example_path("free-pair"))
    d = for_observers(case.observers.far_field)
    ds, _ = combine(case, d, free_responses(case, d))
    ds.attrs.update(run_attributes(case, "fedcba9876543210"))
    return case, ds


def cube_mesh(side=0.2, centre=(0.0, 0.0, 0.5)):
    """A closed cube of 12 outward triangles; its +z face is the group "cab.driver"."""
    c = np.asarray(centre, dtype=float)
    corners = np.array([[i, j, k] for i in (0, 1) for j in (0, 1) for k in (0, 1)], dtype=float)
    v = c + side * (corners - 0.5)
    quads = [(0, 1, 3, 2), (4, 6, 7, 5), (0, 4, 5, 1), (2, 3, 7, 6), (0, 2, 6, 4), (1, 5, 7, 3)]
    tris, tags = [], []
    for q in quads:
        for t in ((q[0], q[1], q[2]), (q[0], q[2], q[3])):
            p = v[list(t)]
            n = np.cross(p[1] - p[0], p[2] - p[0])
            tris.append(t if n @ (p.mean(axis=0) - c) > 0 else t[::-1])
            tags.append(2 if np.allclose(p[:, 2], c[2] + side / 2) else 1)
    return SurfaceMesh(v, np.array(tris), np.array(tags), {"cab": 1, "cab.driver": 2})


@pytest.fixture(scope="module")
def floor():
    return floor_run()


@pytest.fixture(scope="module")
def floor_figures(floor, tmp_path_factory):
    case, ds, _ = floor
    out = tmp_path_factory.mktemp("figures")
    return make_figures(ds, out, case=case, mesh=cube_mesh()), out


def test_every_figure_is_written_as_png_and_svg(floor_figures):
    """A run with both models and a mesh gives all five kinds of figure, each a real PNG
    (PNG signature, ISO/IEC 15948:2004 sec. 5.2) with an SVG twin."""
    written, out = floor_figures
    assert set(written) == {
        "shortfall_map",
        "departure_map_bell",
        "phase_map_bell",
        "polar_controlled",
        "attenuation",
        "departure_by_sector",
        "layout",
    }
    for name, png in written.items():
        data = png.read_bytes()
        assert data[:8] == PNG_MAGIC and len(data) > 5000, name
        svg = png.with_suffix(".svg").read_text()
        assert "<svg" in svg[:2000] and svg.rstrip().endswith("</svg>"), name
    assert not list(out.glob(".*part"))


def test_free_only_run_draws_the_free_field_figures_and_no_comparison(tmp_path):
    """A free-field run has no scattered field: no departure map or sector figure, but
    the controlled-field polar and the predicted attenuation (the issue's requirement)."""
    case, ds = free_run()
    written = make_figures(ds, tmp_path, case=case)
    assert set(written) == {"polar_controlled", "attenuation"}
    assert all(p.read_bytes()[:8] == PNG_MAGIC for p in written.values())


def test_departure_map_shows_the_exact_image_source_departure(floor):
    """For the primary alone above a rigid plane the far-field level ratio to free field is
    |1 + e^{-2ikh sin θ}| = 2|cos(kh sin θ)| (method of images; Morse & Ingard 1968,
    sec. 7.4), θ the azimuth in the xz plane. The map's cells must hold exactly that,
    frequency along x and azimuth along y."""
    case, ds, _ = floor
    fig = departure_map_figure(ds, "bell", Tolerance(level_db=1.0), case.tolerance.sectors)
    mesh = next(c for c in fig.axes[0].collections if isinstance(c, QuadMesh))
    shown = np.ma.asarray(mesh.get_array()).reshape(ds.sizes["direction"], ds.sizes["frequency"])
    k = 2 * np.pi * ds["frequency"].values / case.medium.speed_of_sound
    theta = np.radians(ds["azimuth_deg"].values)
    exact = 20 * np.log10(np.abs(2 * np.cos(np.outer(np.sin(theta), k) * HEIGHT)))
    upper = (np.sin(theta) > 0.05)[:, None] & (exact > -30)
    np.testing.assert_allclose(shown.data[upper], exact[upper], atol=1e-9)
    assert not np.ma.getmaskarray(shown)[upper].any()


def test_map_hatches_exactly_the_not_resolved_cells(floor):
    """Hatched cells are those where the controlled system's attenuation shortfall is within
    the BEM error estimate of the tolerated shortfall (the rule of
    bemcheck.compare.trust.judge_shortfall), outside nulls; counted cell by cell."""
    case, ds, _ = floor
    fig = departure_map_figure(ds, "controlled", case.tolerance, quantity="shortfall")
    rects = [p for p in fig.axes[0].patches if isinstance(p, Rectangle) and p.get_hatch()]
    az_step = 5.0
    cells = sum(round(r.get_height() / az_step) for r in rects)
    st = ds["status"].sel(signal="controlled").values
    judged = ds["significant"].sel(signal="controlled").values
    expected = int(((st == NOT_RESOLVED) & judged).sum())
    assert expected > 0 and cells == expected


def test_polar_curves_differ_by_the_image_source_ratio(floor):
    """Scattered minus free-field level of the primary alone = 20 log10 2|cos(kh sin θ)|
    (Morse & Ingard 1968, sec. 7.4); the free-field monopole is omnidirectional
    (Kinsler et al., Fundamentals of Acoustics, 4th ed., 2000, sec. 7.3; from memory)."""
    case, ds, _ = floor
    f = [float(ds["frequency"].values[i]) for i in (2, 8, 12)]
    fig = polar_figure(ds, "bell", f)
    c = case.medium.speed_of_sound
    for ax, freq in zip(fig.axes, f):
        (th_free, r_free), (th_bem, r_bem) = [ln.get_data() for ln in ax.lines[:2]]
        np.testing.assert_allclose(r_free, r_free[0], atol=1e-9)
        exact = 20 * np.log10(np.abs(2 * np.cos(2 * np.pi * freq / c * HEIGHT * np.sin(th_bem))))
        ok = (np.sin(th_bem) > 0.05) & (exact > -20) & (r_bem > ax.get_rmin() + 1.0)
        np.testing.assert_allclose(r_bem[ok] - r_free[ok], exact[ok], atol=1e-9)


def test_attenuation_curve_is_the_two_monopole_result():
    """Free-field minimum-power control of one monopole by another at distance d:
    attenuation = -10 log10(1 - sinc²(kd)) (Nelson, Curtis, Elliott & Bullmore 1987,
    J. Sound Vib. 116(3) 397-414; the two-monopole result, from memory). The plotted line must follow it."""
    case, ds = free_run()
    fig = attenuation_figure(ds)
    f, att = fig.axes[0].lines[0].get_data()
    kd = 2 * np.pi * np.asarray(f) / case.medium.speed_of_sound * 0.2
    np.testing.assert_allclose(att, -10 * np.log10(1 - np.sinc(kd / np.pi) ** 2), rtol=1e-9)


def test_polar_frequencies_spread_over_the_band_and_hit_the_trust_limit(floor):
    """Defaults: the band's ends and a solved frequency nearest the trust limit (the issue's
    requirement), no duplicates, increasing."""
    import xarray as xr

    f = 100.0 * 2.0 ** (np.arange(13) / 3.0)
    ds = xr.Dataset(
        {"trust_limit_hz": (("sector", "signal"), [[700.0]]), "trust_limit_found": (("sector", "signal"), [[True]])},
        coords={"frequency": f, "sector": ["all"], "signal": ["controlled"]},
    )
    got = polar_frequencies(ds, "controlled")
    assert got[0] == f[0] and got[-1] == f[-1] and got == sorted(set(got))
    assert min(abs(np.log(np.array(got) / 700.0))) == pytest.approx(min(abs(np.log(f / 700.0))))


def test_plane_directions_on_a_lebedev_sphere():
    """Lebedev rules of octahedral symmetry hold points on the equator (Lebedev 1976,
    Zh. Vychisl. Mat. Mat. Fiz. 16(2), from memory; as scipy.integrate.lebedev_rule tabulates them):
    the figures draw those, sorted by azimuth, and only those."""
    import xarray as xr

    from bemcheck.observers import sphere

    d = sphere(41, "xy")
    ds = xr.Dataset(
        coords={"azimuth_deg": ("direction", d.azimuth_deg), "elevation_deg": ("direction", d.elevation_deg)}
    )
    idx = plane_directions(ds)
    assert idx.size >= 8
    np.testing.assert_allclose(d.unit[idx, 2], 0.0, atol=1e-12)
    assert np.all(np.diff(d.azimuth_deg[idx]) > 0)
    assert np.sum(np.abs(d.unit[:, 2]) < 1e-12) == idx.size


def test_layout_draws_every_triangle_and_the_mesh_table_measures_the_cube():
    """A cube of side s has area 6 s² and volume s³ (geometry); its right-isosceles
    triangles have aspect ratio √3 by the definition l_max² √3 / (4A), which is 1 for
    an equilateral triangle. The driver face counts to its body."""
    mesh = cube_mesh(side=0.2)
    case = parse_case(CASE.format(h=HEIGHT))
    fig = layout_figure(mesh, case)
    flat = next(c for c in fig.axes[1].collections if isinstance(c, PolyCollection))
    assert len(flat.get_paths()) == 12
    np.testing.assert_allclose(aspect_ratios(mesh.edge_lengths(), mesh.areas), np.sqrt(3.0), rtol=1e-12)
    header, row = mesh_rows(mesh)
    assert row[0] == "cab" and row[1] == "12"
    assert row[header.index("area")] == "0.2400 m²"
    assert row[header.index("enclosed volume")] == "0.00800 m³"


def test_file_stems_are_safe():
    """Source names come from the user's case file and become file names."""
    assert file_stem("departure_map_../../etc") == "departure_map_.._.._etc"
    assert "/" not in file_stem("a/b c") and file_stem("") == "figure"


def test_unknown_signal_or_format_is_refused_before_drawing(floor, tmp_path):
    case, ds, _ = floor
    with pytest.raises(ValueError, match="signals: expected names among bell, left, right, controlled"):
        make_figures(ds, tmp_path, case=case, signals=["nobody"])
    with pytest.raises(ValueError, match="formats"):
        make_figures(ds, tmp_path, case=case, formats=("jpg",))
    assert list(tmp_path.iterdir()) == []


def test_polar_is_in_absolute_level_on_one_scale(floor):
    """A monopole of volume velocity q radiates |p| = ρ ω |q| / (4π r) (Kinsler et al.,
    Fundamentals of Acoustics, 4th ed., 2000, sec. 7.3; from memory): the free-field curve of
    the primary (q = 1e-3 m³/s) sits at 20 log10(|p|/√2 / 20 µPa) at r = 1 m in every panel,
    and every panel has the same radial limits."""
    case, ds, _ = floor
    f = [float(ds["frequency"].values[i]) for i in (2, 8, 12)]
    fig = polar_figure(ds, "bell", f, primary_q=[1e-3])
    rho = case.medium.density
    limits = {ax.get_ylim() for ax in fig.axes if ax.name == "polar"}
    assert len(limits) == 1
    for ax, freq in zip((ax for ax in fig.axes if ax.name == "polar"), f):
        _, r_free = ax.lines[0].get_data()
        spl = 20 * np.log10(rho * 2 * np.pi * freq * 1e-3 / (4 * np.pi) / np.sqrt(2) / 20e-6)
        np.testing.assert_allclose(r_free, spl, atol=1e-6)


def test_controlled_polar_shows_the_uncontrolled_field(floor):
    case, ds, _ = floor
    fig = polar_figure(ds, "controlled", [float(ds["frequency"].values[5])], primary_q=[1e-3])
    labels = [ln.get_label() for ln in fig.axes[0].lines]
    assert labels == ["free field", "scattered, as designed", "scattered, re-optimised", "primaries alone, scattered"]


def test_departure_colours_span_the_data_or_say_where_they_clip(floor):
    """The colour scale reaches the largest departure judged (no silent saturation); a
    departure beyond the ceiling is named on the colour bar. Largest value: from the image
    world's own data, 20 log10 2|cos(kh sin θ)| (Morse & Ingard 1968, sec. 7.4)."""
    from matplotlib.collections import QuadMesh

    from bemcheck.report.style import MAP_CEILING_DB

    case, ds, _ = floor
    fig = departure_map_figure(ds, "bell", Tolerance(level_db=1.0))
    quad = next(c for c in fig.axes[0].collections if isinstance(c, QuadMesh))
    judged = ds["significant"].sel(signal="bell").values[:, plane_directions(ds)]
    largest = np.abs(ds["level_departure_db"].sel(signal="bell").values[:, plane_directions(ds)][judged]).max()
    assert largest > 3.0 and quad.norm.vmax >= largest and quad.norm.vmin <= -largest
    assert "clipped" not in fig.axes[1].get_ylabel()

    loud = ds.copy(deep=True)
    loud["level_departure_db"] = loud["level_departure_db"] * (2 * MAP_CEILING_DB / largest)
    fig = departure_map_figure(loud, "bell", Tolerance(level_db=1.0))
    assert f"colours clipped at ±{MAP_CEILING_DB:g} dB" in fig.axes[1].get_ylabel()
