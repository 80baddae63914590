"""The shared pieces of the results schema: dimension names, flags and the choices that fill name patterns."""

from bemcheck.compare.trust import AGREES, DEPARTS, NOT_RESOLVED
from bemcheck.results.cf import Choice, Flags

STATUS = Flags((AGREES, NOT_RESOLVED, DEPARTS), ("agrees", "not_resolved", "departs"))

MODEL = Choice(
    "model",
    (("free", "in the free-field model (monopoles)"), ("bem", "in the BEM (scattering by the rigid bodies included)")),
)
DESIGN = Choice(
    "design",
    (
        ("as_designed", "the free-field design applied with scattering"),
        ("reoptimised", "strengths re-optimised with scattering"),
    ),
)
WORLD = Choice(
    "world",
    (
        ("predicted", "the free-field model predicts for its design"),
        ("as_designed", "the free-field design gets with scattering"),
        ("reoptimised", "strengths re-optimised with scattering get"),
    ),
)
DEMAND = Choice(
    "demand", (("designed", "by the free-field design"), ("reoptimised", "when re-optimised with scattering"))
)
PART = Choice(
    "part",
    (
        ("instrument", "the primaries alone"),
        ("controls", "the controls alone (as designed)"),
        ("total", "primaries and controls together"),
    ),
)
PLACEMENT = Choice(
    "placement",
    (
        ("free", "free field, every control moved"),
        ("same_moves_free", "free field, only the controls the study with scattering moves"),
        ("scattered", "with scattering, from the stored surface solutions"),
    ),
)
CHANNEL = Choice("channel", (("free", "free field"), ("bem", "with scattering (BEM)")))

F, S, D, P, H = "frequency", "source", "direction", "point", "harmonic"
FGD, FSD, FSG = (F, "signal", D), (F, S, D), (F, "sector", "signal")
DRIVE = (H, S, "demand")
