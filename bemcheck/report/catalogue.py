"""The report's table of the driver catalogue: at each control position, every driver no control names, best first."""

from bemcheck.prebuild.amplifiers import LIMITS
from bemcheck.prebuild.catalogue import DEMANDS
from bemcheck.report.tables import hz

CATALOGUE_TITLE = "Driver catalogue: worst margin at each control position"


def catalogue_rows(cat):
    """Rows (header first) and notes of the ranking in ``summary["before_build"]["driver_catalogue"]``.

    Examples
    --------
    >>> r = {"driver": "d", "passes_every_note": False, "worst_margin_db": -2.04, "first_limit": "excursion",
    ...      "note": "A", "harmonic": 1, "frequency_hz": 110.0, "demand": "designed",
    ...      "margin_by_limit_db": {"excursion": -2.04, "rated power": 3.0},
    ...      "margin_by_demand_db": {"designed": -2.04, "reoptimised": 1.0}}
    >>> rows, notes = catalogue_rows({"drivers": ["d"], "positions": [{"source": "c", "amplifier": "",
    ...                              "passing": [], "ranking": [r]}]})
    >>> rows[1][:4]
    ('c (no amplifier)', 'd', '-2.0', 'excursion at A h1, 110 Hz, designed')
    >>> rows[1][4:]
    ('-2.0', '+1.0', '-2.0', '+3.0', '', '', 'no')
    """
    header = (
        "control (amplifier)",
        "driver",
        "worst margin [dB]",
        "first limit, where",
        "designed [dB]",
        "re-opt. [dB]",
        "xmax [dB]",
        "rated power [dB]",
        "amplifier V [dB]",
        "amplifier I [dB]",
        "passes every note",
    )
    rows = [header]
    for p in cat["positions"]:
        where = f"{p['source']} ({p['amplifier'] or 'no amplifier'})"
        for i, r in enumerate(p["ranking"]):
            by, kind = r["margin_by_limit_db"], r.get("margin_by_demand_db", {})
            demand = "designed" if r["demand"] == "designed" else "re-opt."
            rows.append(
                (
                    where if i == 0 else "",
                    r["driver"],
                    f"{r['worst_margin_db']:+.1f}",
                    f"{r['first_limit']} at {r['note']} h{r['harmonic']}, {hz(r['frequency_hz'])}, {demand}",
                    *(f"{kind[k]:+.1f}" if k in kind else "" for k in DEMANDS),
                    *(f"{by[n]:+.1f}" if n in by else "" for n in LIMITS),
                    "yes" if r["passes_every_note"] else "no",
                )
            )
    notes = [
        f"The catalogue: {', '.join(cat['drivers'])} (the [[driver]] entries no control names), each checked "
        "at every control position with that position's amplifier and the demands of every note and harmonic, "
        "designed and re-optimised. Each margin is the smallest over those demands (designed, re-opt.: over "
        "those alone), in dB of drive level; the worst margin is the smallest of them, and a driver passes "
        "every note where it is at 0 dB or above.",
        "The demands are those of the layout as designed for its own drivers; a different driver radiates the "
        "same volume velocity, so the demands do not change with the driver (a piston's size and the "
        "cabinet are the layout's).",
    ]
    return rows, notes


def catalogue_sections(summary):
    """The catalogue as a (title, rows, notes) section of the before-build part, or none.

    Examples
    --------
    >>> catalogue_sections({"before_build": {"driver_catalogue": {}}})
    []
    """
    cat = (summary.get("before_build") or {}).get("driver_catalogue")
    return [(CATALOGUE_TITLE, *catalogue_rows(cat))] if cat else []
