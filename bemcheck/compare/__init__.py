"""The comparison: departures of the scattered field from the monopole model, trust limits, verdict."""

from bemcheck.compare.departures import CONTROLLED, Models, compare, level_departure_db, phase_departure_deg
from bemcheck.compare.judgements import Verdict
from bemcheck.compare.trust import crossing_frequency, significant, trust_tables
from bemcheck.compare.verdict import rules_of_thumb, verdict, verdict_lines

__all__ = [
    "CONTROLLED",
    "Models",
    "Verdict",
    "compare",
    "crossing_frequency",
    "level_departure_db",
    "phase_departure_deg",
    "rules_of_thumb",
    "significant",
    "trust_tables",
    "verdict",
    "verdict_lines",
]
