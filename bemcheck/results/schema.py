"""Every variable bemcheck writes to results.nc and explore.nc, declared once: name, dims, units, long name, flags.

A producer (at any floor) adds a variable by name with its dims and values
only; :func:`bemcheck.results.files.write_dataset` attaches the attributes
declared here and refuses a variable declared nowhere, so a new variable is
declared here and nowhere else. The README's tables are made from these
declarations (``markdown_table``) and a test holds them equal.

Units are UDUNITS strings as CF 1.10 sec. 3.1 asks (``1``: a dimensionless
number, sec. 3.1.1), with ``dB`` as in CF's standard-name table; flags and
booleans carry ``flag_values`` and ``flag_meanings`` (sec. 3.5) and no units;
text variables (names, routes) carry a long name only. Strengths are volume
velocities (m³/s, peak amplitudes), so a quantity per unit strength is in
Pa·s/m³ (a pressure) or Pa·s/m² (a far-field amplitude, pressure times
distance).

Examples
--------
>>> RESULTS.lookup("p_bem")[1]["units"]
'Pa s/m^2'
>>> RESULTS.lookup("status")[1]["flag_meanings"]
'agrees not_resolved departs'
"""

from bemcheck.results.cf import DECIBEL as DB
from bemcheck.results.cf import Choice, Schema, Variable
from bemcheck.results.schema_choices import (
    FSD,
    MODEL,
    D,
    F,
    H,
    P,
    S,
)
from bemcheck.results.schema_compare import _COMPARISON
from bemcheck.results.schema_prebuild import _BEFORE_BUILD

_COORDINATES = (
    Variable(F, (F,), "frequency", "Hz", coordinate=True),
    Variable(S, (S,), "source name, as in the case file", coordinate=True),
    Variable("at_source", ("at_source",), "source at which a transfer impedance's pressure is taken", coordinate=True),
    Variable("role", (S,), "role of the source: primary or control", coordinate=True),
    Variable("xyz", ("xyz",), "Cartesian axis of the scene", coordinate=True),
    Variable(D, (D,), "far-field direction index", "1", coordinate=True),
    Variable(
        "azimuth_deg",
        (D,),
        "azimuth of the direction in its plane (see plane), counter-clockwise from the plane's first axis",
        "degree",
        coordinate=True,
    ),
    Variable(
        "elevation_deg",
        (D,),
        "elevation of the direction out of its plane, toward the plane's normal",
        "degree",
        coordinate=True,
    ),
    Variable(
        "plane",
        (D,),
        "far-field plane the direction belongs to: xy, xz, yz, the name of a plane given by its normal, "
        "or sphere (the Lebedev directions)",
        coordinate=True,
    ),
    Variable(
        "direction_weight",
        (D,),
        "quadrature weight of the direction: its angle on a circle (radians, sum "
        "2 pi) or its solid angle on a sphere (steradians, sum 4 pi)",
        "1",
        coordinate=True,
    ),
    Variable(P, (P,), "observer point name", coordinate=True),
    Variable(
        "signal",
        ("signal",),
        "what is compared: each source alone, and controlled (the controlled system as designed)",
        coordinate=True,
    ),
    Variable("sector", ("sector",), "tolerance sector name", coordinate=True),
    Variable("sector_plane", ("sector",), "far-field plane the sector's azimuths are in", coordinate=True),
    Variable(
        "sector_azimuth",
        ("sector",),
        "azimuth at the middle of the sector",
        "degree",
        coordinate=True,
        bounds="sector_azimuth_bounds",
    ),
    Variable(
        "world",
        ("world",),
        "how the attenuation is evaluated: predicted (free field), own_body (each source "
        "with only its own body), as_designed, reoptimised",
        coordinate=True,
    ),
    Variable(H, (H,), "harmonic index over every played note, in order", "1", coordinate=True),
    Variable("harmonic_note", (H,), "note the harmonic belongs to", coordinate=True),
    Variable("harmonic_number", (H,), "harmonic number within its note (1: the fundamental)", "1", coordinate=True),
    Variable("harmonic_frequency", (H,), "frequency of the harmonic", "Hz", coordinate=True),
    Variable(
        "demand",
        ("demand",),
        "which strengths a loudspeaker must deliver: designed (free-field design) or reoptimised (with scattering)",
        coordinate=True,
    ),
    Variable(
        "catalogue_driver",
        ("catalogue_driver",),
        "driver of the [[driver]] catalogue no control names",
        coordinate=True,
    ),
    Variable(
        "placement_percentile", ("placement_percentile",), "percentile of the random builds", "%", coordinate=True
    ),
    Variable(
        "channel_percentile",
        ("channel_percentile",),
        "percentile of the builds with channel errors",
        "%",
        coordinate=True,
    ),
)

_MODELS = (
    Variable(
        "p_{model}",
        FSD,
        "far-field amplitude F {model} per unit volume velocity of each source "
        "(p = F q exp(ikr)/r far away: the pressure at 1 m per m^3/s)",
        "Pa s/m^2",
        choices=(MODEL,),
    ),
    Variable(
        "p_{model}_points",
        (F, S, P),
        "pressure at the observer points {model} per unit volume velocity of each source",
        "Pa s/m^3",
        choices=(MODEL,),
    ),
    Variable(
        "z_{model}",
        (F, "at_source", S),
        "transfer impedance {model}: pressure at at_source per unit volume "
        "velocity of source (the diagonal's real part is the radiation resistance)",
        "Pa s/m^3",
        choices=(MODEL,),
    ),
    Variable("power_{model}_primary", (F,), "power radiated by the primaries alone {model}", "W", choices=(MODEL,)),
    Variable(
        "q_control_{model}",
        (F, S),
        "control strengths optimal {model} for the case's objective (zero for primaries)",
        "m^3/s",
        choices=(MODEL,),
    ),
    Variable(
        "power_{model}_controlled",
        (F,),
        "power with the primaries and the controls of q_control {model}",
        "W",
        choices=(MODEL,),
    ),
    Variable(
        "attenuation_{model}_db", (F,), "10 log10 of primary power over controlled power {model}", DB, choices=(MODEL,)
    ),
    Variable("q_primary", (S,), "primary strengths of the sweep (zero for controls)", "m^3/s"),
    Variable("source_position", (S, "xyz"), "source position", "m"),
)

RESULTS = Schema("results.nc", _COORDINATES + _MODELS + _COMPARISON + _BEFORE_BUILD)

EXPLORE_MODEL = Choice("model", (("free", "in the free field"), ("bem", "with scattering by the bodies")))

EXPLORE = Schema(
    "explore.nc",
    (
        Variable(F, (F,), "frequency", "Hz", coordinate=True),
        Variable("candidate", ("candidate",), "candidate control position index", "1", coordinate=True),
        Variable("xyz", ("xyz",), "Cartesian axis of the scene", coordinate=True),
        Variable("choice", ("choice",), "chosen control, in the order chosen", "1", coordinate=True),
        Variable("model", ("model",), "free: free-field monopoles; bem: rigid bodies scattering", coordinate=True),
        Variable("design", ("design",), "the model the layout was chosen with", coordinate=True),
        Variable("candidate_position", ("candidate", "xyz"), "candidate control position", "m"),
        Variable(
            "candidate_grid_index", ("candidate", "grid_axis"), "(i, j) on the explore grid; -1 for a listed point", "1"
        ),
        Variable(
            "single_control_attenuation_{model}_db",
            (F, "candidate"),
            "minimum power attenuation with one control at the candidate, {model}",
            DB,
            choices=(EXPLORE_MODEL,),
        ),
        Variable(
            "single_control_attenuation_{model}_error_db",
            (F, "candidate"),
            "numerical error of the single-control attenuation {model} (zero for the exact free field)",
            DB,
            choices=(EXPLORE_MODEL,),
        ),
        Variable(
            "single_control_attenuation_{model}_band_db",
            ("candidate",),
            "single-control attenuation {model}, averaged over the frequencies (mean of dB)",
            DB,
            choices=(EXPLORE_MODEL,),
        ),
        Variable("chosen_candidate", ("design", "choice"), "candidate index of each chosen control", "1"),
        Variable("chosen_position", ("design", "choice", "xyz"), "position of each chosen control", "m"),
        Variable(
            "layout_attenuation_db",
            ("design", "model", F),
            "minimum power attenuation of the chosen layout, evaluated in each model",
            DB,
        ),
        Variable("layout_attenuation_error_db", ("design", "model", F), "numerical error of layout_attenuation_db", DB),
        Variable(
            "layout_attenuation_band_db",
            ("design", "model"),
            "layout_attenuation_db averaged over the frequencies (mean of dB)",
            DB,
        ),
        Variable(
            "unknowns", (F,), "BEM unknowns N of the band mesh", "1"
        ),  # the case's controls: the power–directivity trade-off and the acoustic centres
        Variable(
            "alpha",
            ("alpha",),
            "weight of the sector's mean-square pressure against the radiated power (0 power, 1 sector)",
            "1",
            coordinate=True,
        ),
        Variable(
            "centred_source",
            ("centred_source",),
            "a case source on a body, whose acoustic centre is fitted",
            coordinate=True,
        ),
        Variable(
            "centre_design",
            ("centre_design",),
            "design evaluated: predicted, as_designed, centred, reoptimised",
            coordinate=True,
        ),
        Variable(
            "tradeoff_power_attenuation_db",
            ("model", "frequency", "alpha"),
            "power attenuation of the case's controls minimising (1 - alpha) W/W_u + alpha P/P_u",
            "dB",
        ),
        Variable(
            "tradeoff_sector_attenuation_db",
            ("model", "frequency", "alpha"),
            "attenuation of the mean-square far-field pressure in the trade-off sector, same controls",
            "dB",
        ),
        Variable(
            "tradeoff_power_attenuation_error_db",
            ("model", "frequency", "alpha"),
            "numerical error of tradeoff_power_attenuation_db (zero in the free field)",
            "dB",
        ),
        Variable(
            "tradeoff_sector_attenuation_error_db",
            ("model", "frequency", "alpha"),
            "numerical error of tradeoff_sector_attenuation_db (zero in the free field)",
            "dB",
        ),
        Variable(
            "tradeoff_objective_power_attenuation_db",
            ("model", "frequency"),
            "power attenuation of the case's own objective optimised in each model",
            "dB",
        ),
        Variable(
            "tradeoff_objective_sector_attenuation_db",
            ("model", "frequency"),
            "sector attenuation of the case's own objective optimised in each model",
            "dB",
        ),
        Variable(
            "tradeoff_as_designed_power_attenuation_db",
            ("frequency",),
            "power attenuation of the free-field design applied with scattering",
            "dB",
        ),
        Variable(
            "tradeoff_as_designed_sector_attenuation_db",
            ("frequency",),
            "sector attenuation of the free-field design applied with scattering",
            "dB",
        ),
        Variable(
            "centre_position",
            ("frequency", "centred_source", "xyz"),
            "acoustic centre: monopole position fitted to the source's far field with its own body only",
            "m",
        ),
        Variable(
            "centre_designed_position", ("centred_source", "xyz"), "the source's position in the free-field model", "m"
        ),
        Variable(
            "centre_offset",
            ("frequency", "centred_source"),
            "distance from the designed position to the acoustic centre",
            "m",
        ),
        Variable(
            "centre_fit_residual",
            ("frequency", "centred_source"),
            "relative RMS misfit of the fitted monopole over the fit directions (0: a monopole)",
            "1",
        ),
        Variable(
            "centre_amplitude_db",
            ("frequency", "centred_source"),
            "20 log10 of the fitted monopole's amplitude over a free monopole of the same strength",
            "dB",
        ),
        Variable(
            "centre_design_attenuation_db",
            ("centre_design", "frequency"),
            "power attenuation: free-field prediction, as designed, free-field design with the acoustic centres, re-optimised; the last three with scattering",
            "dB",
        ),
        Variable(
            "centre_design_attenuation_error_db",
            ("centre_design", "frequency"),
            "numerical error of centre_design_attenuation_db",
            "dB",
        ),
        Variable(
            "centre_recovered_db",
            ("frequency",),
            "attenuation regained with scattering by designing with the acoustic centres (centred - as designed)",
            "dB",
        ),
        Variable(
            "centre_loss_db",
            ("frequency",),
            "as-designed loss: free-field prediction minus the as-designed attenuation",
            "dB",
        ),
    ),
)
