"""A driver for every note: the ``[[driver]]`` entries no control names, ranked at each control position.

The catalogue is checked with the demands the drive check uses (every note,
every harmonic, designed and re-optimised; :func:`~bemcheck.prebuild.notes.control_demands`)
through the same :func:`~bemcheck.prebuild.notes.check_drivers`, with the
amplifier that feeds the position.  A driver's worth at a position is its
worst margin [dB] over all those demands and limits (excursion, rated
power, amplifier voltage and current): how far the level may rise before
the first limit, so the candidates rank by it and those at 0 dB or above
pass every note.
"""

from dataclasses import dataclass

import numpy as np

from bemcheck.case.amplifiers import amplifier_of
from bemcheck.prebuild.amplifiers import LIMITS
from bemcheck.prebuild.notes import DESIGNED, REOPTIMISED, DriveRow, check_drivers

DEMANDS = (DESIGNED, REOPTIMISED)


@dataclass(frozen=True)
class Candidate:
    """One catalogue driver at one control position.

    ``worst`` is the demand with the smallest margin; ``by_limit`` the
    smallest margin of each limit checked, over every demand [dB];
    ``by_demand`` the worst margin over the designed demands and over the
    re-optimised ones [dB].
    """

    driver: str
    worst: DriveRow
    by_limit: tuple[tuple[str, float], ...]
    by_demand: tuple[tuple[str, float], ...]

    @property
    def margin_db(self):
        """Worst margin over every note, harmonic, demand and limit [dB]."""
        return self.worst.margin_db

    @property
    def passes(self):
        """True when no demand exceeds any limit."""
        return self.margin_db >= 0.0


@dataclass(frozen=True)
class Position:
    """The catalogue ranked at one control position, best first."""

    source: str
    amplifier: str
    candidates: tuple[Candidate, ...]

    @property
    def passing(self):
        """Names of the drivers that pass every note, best first."""
        return tuple(c.driver for c in self.candidates if c.passes)


def catalogue_drivers(case):
    """The ``[[driver]]`` entries no source names, in case-file order.

    Examples
    --------
    >>> import bemcheck
    >>> [d.name for d in catalogue_drivers(bemcheck.load_case(bemcheck.example_path("demo")))]
    ['tiny_2in', 'mid_5in']
    """
    named = {s.driver for s in case.sources if s.driver}
    return tuple(d for d in case.drivers if d.name not in named)


def _candidate(driver, source, demands, medium, amplifiers):
    rows = check_drivers({driver.name: driver}, {source: driver.name}, demands, medium, amplifier_of=amplifiers).rows
    worst = min(rows, key=lambda r: r.margin_db)
    limits = [n for n in LIMITS if n in worst.margins_db]
    by_limit = tuple((n, min(r.margins_db[n] for r in rows)) for n in limits)
    by_demand = tuple(
        (k, min(r.margin_db for r in rows if r.demand == k)) for k in DEMANDS if any(r.demand == k for r in rows)
    )
    return Candidate(driver.name, worst, by_limit, by_demand)


def rank_catalogue(case, demands):
    """Rank the catalogue drivers at every control position.

    Parameters
    ----------
    case : Case
    demands : Mapping[str, list of Demand]
        Each control's demands by control name, from
        :func:`~bemcheck.prebuild.notes.control_demands`.

    Returns
    -------
    tuple of Position
        One per control with demands, in the case's order; empty when the
        catalogue is.
    """
    drivers = catalogue_drivers(case)
    if not drivers:
        return ()
    amplifiers = amplifier_of(case.amplifiers)
    out = []
    for source, asked in demands.items():
        if not asked:
            continue
        found = [_candidate(d, source, asked, case.medium, amplifiers) for d in drivers]
        found.sort(key=lambda c: -c.margin_db)
        amp = amplifiers.get(source)
        out.append(Position(source, amp.name if amp else "", tuple(found)))
    return tuple(out)


def catalogue_summary(positions):
    """JSON-ready ranking: ``{"drivers": [...], "positions": [...]}``, or {} without a catalogue."""
    if not positions:
        return {}
    return {
        "drivers": sorted(c.driver for c in positions[0].candidates),
        "positions": [
            {
                "source": p.source,
                "amplifier": p.amplifier,
                "passing": list(p.passing),
                "ranking": [
                    {
                        "driver": c.driver,
                        "passes_every_note": c.passes,
                        "worst_margin_db": c.margin_db,
                        "first_limit": c.worst.limit,
                        "note": c.worst.note,
                        "harmonic": c.worst.harmonic,
                        "frequency_hz": c.worst.frequency_hz,
                        "demand": c.worst.demand,
                        "margin_by_limit_db": dict(c.by_limit),
                        "margin_by_demand_db": dict(c.by_demand),
                    }
                    for c in p.candidates
                ],
            }
            for p in positions
        ],
    }


def catalogue_lines(positions, case):
    """Plain-text lines for ``bemcheck run``: per position, who passes and the ranking."""
    fed = amplifier_of(case.amplifiers)
    lines = [
        f"  note: amplifier channel of {s.name} not checked: the control names no driver"
        for s in case.controls
        if s.name in fed and not s.driver
    ]
    if not positions:
        return lines
    names = ", ".join(sorted(c.driver for c in positions[0].candidates))
    lines.append(f"Driver catalogue ({names}): worst margin over every note, harmonic and demand, best first")
    for p in positions:
        on = f" on {p.amplifier}" if p.amplifier else " (no amplifier named)"
        ranks = ", ".join(
            f"{c.driver} {c.margin_db:+.1f} dB"
            + ("" if c.passes else f" ({c.worst.limit}, {c.worst.note} h{c.worst.harmonic} {c.worst.demand})")
            for c in p.candidates
        )
        passing = ", ".join(p.passing) if p.passing else "none"
        lines.append(f"  {p.source}{on}: passes every note: {passing}; ranking: {ranks}")
    return lines


# The ranking's results variables and their dimensions; units and meanings are in results/schema.py.
CATALOGUE_FIGURES = (
    ("catalogue_worst_margin_db", ("source", "catalogue_driver")),
    ("catalogue_worst_margin_by_demand_db", ("source", "catalogue_driver", "demand")),
    ("catalogue_passes_every_note", ("source", "catalogue_driver")),
    ("catalogue_first_limit", ("source", "catalogue_driver")),
)


def catalogue_variables(ds, positions):
    """Add the ranking to ``ds`` in place: the ``catalogue_*`` variables of :data:`CATALOGUE_FIGURES`.

    Sources that are not ranked (primaries, controls without demands) hold
    0, false and "" with ``catalogue_ranked`` false.
    """
    drivers = sorted(c.driver for c in positions[0].candidates)
    sources = list(ds["source"].values)
    ds.coords["catalogue_driver"] = ("catalogue_driver", drivers)
    ds.coords["demand"] = ("demand", list(DEMANDS))
    n, m = len(sources), len(drivers)
    values = {
        "catalogue_worst_margin_db": np.zeros((n, m)),
        "catalogue_passes_every_note": np.zeros((n, m), bool),
        "catalogue_worst_margin_by_demand_db": np.zeros((n, m, len(DEMANDS))),
        "catalogue_first_limit": np.full((n, m), "", dtype=object),
    }
    ranked = np.zeros(n, bool)
    for p in positions:
        j = sources.index(p.source)
        ranked[j] = True
        for c in p.candidates:
            k = drivers.index(c.driver)
            values["catalogue_worst_margin_db"][j, k] = c.margin_db
            values["catalogue_passes_every_note"][j, k] = c.passes
            values["catalogue_first_limit"][j, k] = c.worst.limit
            for kind, margin in c.by_demand:
                values["catalogue_worst_margin_by_demand_db"][j, k, DEMANDS.index(kind)] = margin
    for name, dims in CATALOGUE_FIGURES:
        ds[name] = (dims, values[name].astype(str) if name.endswith("limit") else values[name])
    ds["catalogue_ranked"] = ("source", ranked)
