"""The report's decision table: per sector and for the power, and the before-build GO/NO-GO with its first reason.

The verdict comes from a world known exactly (a primary and a control 2 cm
apart beside a rigid sphere of radius 0.3 m, 0.1 m from the pair: the exact
series of tests/support/sphere_world.py as the BEM), whose attenuation as
designed falls short inside the band.
"""

import numpy as np

from bemcheck.case import parse_case
from bemcheck.observers import for_observers
from bemcheck.report.tables import decision_rows, verdict_attenuation_rows
from bemcheck.results.combine import combine
from bemcheck.run.runner import free_responses
from tests.support.cases import CIRCLE_5, SIXTH_OCTAVES_100_1600, case_text, source_pair
from tests.support.sphere_world import sphere_response

PAIR = case_text(
    "a pair beside a rigid sphere (invented test case)",
    SIXTH_OCTAVES_100_1600,
    sources=source_pair([0.0, 0.0, 0.0], [0.0, 0.02, 0.0]),
    observers=CIRCLE_5
    + '[tolerance]\nsectors = [ { name = "all", from_deg = 0.0, to_deg = 360.0 }, '
    + '{ name = "front", from_deg = -45.0, to_deg = 45.0 } ]\n',
)
BEFORE_BUILD = {
    "go": False,
    "items": [
        {"go": True, "check": "loudspeakers and amplifiers deliver every harmonic"},
        {"go": False, "check": "levels at observer points: the controls raise ear above 85 dB(A)"},
        {"go": False, "check": "placement: ±5 mm given; ±2 mm keeps the loss within 1 dB"},
    ],
}


def _verdict():
    case = parse_case(PAIR)
    d = for_observers(case.observers.far_field)
    x = np.array([s.position for s in case.sources])
    exact = [sphere_response(f, case.medium, [0.4, 0.0, 0.0], 0.3, x, d.unit) for f in case.frequencies]
    return combine(case, d, free_responses(case, d), exact)[1]


def test_the_decision_has_a_row_per_sector_the_power_and_the_first_before_build_reason():
    v = _verdict()
    rows = decision_rows(v, BEFORE_BUILD)
    assert [r[0] for r in rows[1:]] == [
        "sector all (0° to 360° in xy)",
        "sector front (-45° to 45° in xy)",
        "power",
        "before build",
    ]
    for row, sector in zip(rows[1:3], v.sectors, strict=True):
        if sector.attenuation_departs_from_hz is not None:
            assert row[1].startswith("falls short from ")
        else:
            assert row[1] in ("holds over the band",) or row[1].startswith("not resolved at ")
    assert any(r[1].startswith("falls short from ") for r in rows[1:3])  # this world fails inside the band
    assert rows[-1] == ("before build", "NO-GO", BEFORE_BUILD["items"][1]["check"], "")
    go = decision_rows(v, {"go": True, "items": [{"go": True, "check": "x"}]})
    assert go[-1] == ("before build", "GO", "every check passed", "")
    assert decision_rows(v)[-1][0] == "power"  # no before-build check: no row for it


def test_beside_it_the_attenuation_predicted_as_designed_and_reoptimised_with_their_errors():
    rows = verdict_attenuation_rows(_verdict())
    labels = [r[0] for r in rows]
    assert labels[1:4] == ["predicted (free field)", "as designed", "re-optimised"]
    assert all("±" in r[1] and "±" in r[4] for r in rows[2:4])


def test_the_other_bodies_column_is_the_largest_change_in_each_sector():
    """Each sector row names the source whose field the other bodies change most within that sector;
    a sector's value survives the summary.json round trip."""
    from dataclasses import replace

    from bemcheck.compare.judgements import FieldTrust
    from bemcheck.results.verdict_summary import verdict_from_summary, verdict_summary

    v = _verdict()
    changes = {"all": {"p": 3.4, "c": 1.2}, "front": {"p": 0.4, "c": 0.9}}
    sectors = tuple(
        replace(s, fields=tuple(replace(f, other_bodies_db=changes[s.sector][f.source]) for f in s.fields))
        for s in v.sectors
    )
    v = replace(v, sectors=sectors)
    rows = {r[0].split(" (")[0]: r[3] for r in decision_rows(v)[1:]}
    assert rows["sector all"] == "up to 3.4 dB (p)"
    assert rows["sector front"] == "up to 0.9 dB (c)"
    back = verdict_from_summary(verdict_summary(v))
    assert [f.other_bodies_db for f in back.sectors[1].fields] == [0.4, 0.9]
    assert FieldTrust("x", None, None, 0.0).other_bodies_db is None
