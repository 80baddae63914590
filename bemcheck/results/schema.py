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

from bemcheck.compare.trust import AGREES, DEPARTS, NOT_RESOLVED
from bemcheck.results.cf import BOOLEAN, Choice, Flags, Schema, Variable
from bemcheck.results.cf import DECIBEL as DB

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
        "azimuth of the direction in the observers' plane, counter-clockwise from its first axis",
        "degree",
        coordinate=True,
    ),
    Variable(
        "elevation_deg", (D,), "elevation of the direction out of the observers' plane", "degree", coordinate=True
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

_COMPARISON = (
    Variable(
        "significant", FGD, "direction outside a deep null of both models (counts in the judgement)", flags=BOOLEAN
    ),
    Variable("level_departure_db", FGD, "20 log10 |p_bem / p_free| in the far field", DB),
    Variable("phase_departure_deg", FGD, "phase of p_bem / p_free in the far field", "degree"),
    Variable(
        "level_error_db",
        FGD,
        "numerical error of the BEM level (the controlled signal is judged by its attenuation instead)",
        DB,
    ),
    Variable("phase_error_deg", FGD, "numerical error of the BEM phase", "degree"),
    Variable(
        "far_field_error",
        (F, S),
        "numerical error of each source's BEM far-field amplitude per unit volume velocity, largest over directions",
        "Pa s/m^2",
    ),
    Variable("z_bem_error", (F, "at_source", S), "numerical error of the BEM transfer impedances", "Pa s/m^3"),
    Variable("level_departure_points_db", (F, "signal", P), "20 log10 |p_bem / p_free| at the observer points", DB),
    Variable(
        "phase_departure_points_deg", (F, "signal", P), "phase of p_bem / p_free at the observer points", "degree"
    ),
    Variable(
        "directional_attenuation_{world}_db",
        (F, D),
        "20 log10 |p_uncontrolled / p_controlled| per direction: what {world}",
        DB,
        choices=(WORLD,),
    ),
    Variable(
        "directional_attenuation_{design}_error_db",
        (F, D),
        "numerical error, either way, of the directional attenuation of {design}",
        DB,
        choices=(DESIGN,),
    ),
    Variable(
        "directional_attenuation_{design}_below_db",
        (F, D),
        "how much lower the directional attenuation of {design} may truly be",
        DB,
        choices=(DESIGN,),
    ),
    Variable("attenuation_{design}_db", (F,), "power attenuation of {design}", DB, choices=(DESIGN,)),
    Variable(
        "attenuation_{design}_error_db",
        (F,),
        "numerical error, either way, of the power attenuation of {design}",
        DB,
        choices=(DESIGN,),
    ),
    Variable(
        "attenuation_{design}_below_db",
        (F,),
        "how much lower the power attenuation of {design} may truly be",
        DB,
        choices=(DESIGN,),
    ),
    Variable("power_{design}", (F,), "power radiated with {design}", "W", choices=(DESIGN,)),
    Variable("attenuation_loss_db", (F,), "power attenuation predicted by the free-field model minus as designed", DB),
    Variable(
        "source_model_level_db",
        FSD,
        "20 log10 |p_own_body / p_free|: the source with only the body it sits on against a free monopole",
        DB,
    ),
    Variable("source_model_phase_deg", FSD, "phase of p_own_body / p_free", "degree"),
    Variable("other_bodies_level_db", FSD, "20 log10 |p_bem / p_own_body|: diffraction by the other bodies", DB),
    Variable("other_bodies_phase_deg", FSD, "phase of p_bem / p_own_body", "degree"),
    Variable(
        "sector_attenuation_db",
        (F, "sector", "world"),
        "attenuation of the mean-square far-field pressure over the sector",
        DB,
    ),
    Variable(
        "sector_attenuation_{design}_error_db",
        (F, "sector"),
        "numerical error of the sector attenuation of {design}",
        DB,
        choices=(DESIGN,),
    ),
    Variable(
        "sector_azimuth_bounds",
        ("sector", "nv"),
        "azimuths bounding the sector: from the first counter-clockwise to the second",
        "degree",
    ),
    Variable(
        "status",
        FGD,
        "judgement per direction: a single source field against field, the controlled "
        "system by its attenuation as designed",
        flags=STATUS,
    ),
    Variable(
        "trust_limit_hz",
        ("sector", "signal"),
        "lowest frequency where the departure surely exceeds the "
        "tolerance (the top frequency where trust_limit_found is false)",
        "Hz",
    ),
    Variable(
        "trust_limit_found",
        ("sector", "signal"),
        "a departure beyond the tolerance was found in the band",
        flags=BOOLEAN,
    ),
    Variable(
        "trust_limit_set_by",
        ("sector", "signal"),
        "what set the trust limit: level, phase or attenuation (empty: none found)",
    ),
    Variable("diffraction_rms_db", FSG, "RMS over the sector's directions of |level departure|", DB),
    Variable("diffraction_max_db", FSG, "largest |level departure| in the sector", DB),
    Variable("diffraction_max_azimuth_deg", FSG, "azimuth of the largest departure in the sector", "degree"),
    Variable("not_resolved_fraction", FSG, "share of the sector's directions where the mesh cannot tell", "1"),
    Variable(
        "attenuation_{design}_status",
        (F,),
        "judgement of the power attenuation of {design} against min(predicted, target)",
        flags=STATUS,
        choices=(DESIGN,),
    ),
    Variable(
        "attenuation_{design}_limit_hz",
        (),
        "lowest frequency where the power attenuation of {design} surely "
        "falls short (the top frequency where none does)",
        "Hz",
        choices=(DESIGN,),
    ),
    Variable(
        "attenuation_{design}_limit_found",
        (),
        "the power attenuation of {design} surely falls short somewhere in the band",
        flags=BOOLEAN,
        choices=(DESIGN,),
    ),
    Variable(
        "numerical_error_db",
        (F, D),
        "BEM level error estimate, worst source (band mesh against a second mesh of known size ratio)",
        DB,
    ),
    Variable("numerical_error_deg", (F, D), "BEM phase error estimate, worst source", "degree"),
    Variable("elements_per_wavelength", (F,), "wavelength over the largest element edge of the mesh solved", "1"),
    Variable("elements", (F,), "triangles in the mesh solved", "1"),
)

_BEFORE_BUILD = (
    Variable(
        "q_required_{demand}",
        (H, S),
        "volume velocity (peak) asked {demand} at each harmonic",
        "m^3/s",
        choices=(DEMAND,),
    ),
    Variable(
        "q_available_excursion", (H, S), "largest volume velocity within xmax, Sd xmax omega (0: no driver)", "m^3/s"
    ),
    Variable("q_available_rated_power", (H, S), "volume velocity at the driver's rated power (0: no driver)", "m^3/s"),
    Variable("harmonic_scattered", (H,), "the BEM was solved at this harmonic", flags=BOOLEAN),
    Variable(
        "spl_points_without_control",
        (H, P),
        "sound pressure level re 20 uPa at the observer points, primaries alone",
        DB,
    ),
    Variable(
        "spl_points_with_control",
        (H, P),
        "sound pressure level re 20 uPa at the observer points, with the controls as designed",
        DB,
    ),
    Variable("attenuation_harmonic_as_designed_db", (H,), "power attenuation of the design at each harmonic", DB),
    Variable(
        "placement_{placement}_computed",
        (H,),
        "the placement spread was computed ({placement})",
        flags=BOOLEAN,
        choices=(PLACEMENT,),
    ),
    Variable(
        "placement_{placement}_db",
        (H, "placement_percentile"),
        "power attenuation at these percentiles of random builds ({placement}; 0: not computed)",
        DB,
        choices=(PLACEMENT,),
    ),
    Variable(
        "placement_{placement}_designed_db",
        (H,),
        "power attenuation with the controls where designed ({placement})",
        DB,
        choices=(PLACEMENT,),
    ),
    Variable(
        "placement_{placement}_tolerance_needed_m",
        (H,),
        "largest position tolerance keeping the 5 % loss within max_loss_db ({placement}; 0: not computed)",
        "m",
        choices=(PLACEMENT,),
    ),
    Variable(
        "placement_{placement}_tolerance_found",
        (H,),
        "false when even the largest tolerance searched keeps the loss within max_loss_db ({placement})",
        flags=BOOLEAN,
        choices=(PLACEMENT,),
    ),
    Variable(
        "placement_scattered_moves",
        (S,),
        "control moved in the placement study with scattering (the others move with a body and are held)",
        flags=BOOLEAN,
    ),
    Variable("placement_tolerance_m", (), "largest position tolerance of the controls", "m"),
    Variable("p_points_{part}", (H, P), "pressure (peak) at the observer points from {part}", "Pa", choices=(PART,)),
    Variable("spl_points_{part}_db", (H, P), "sound pressure level re 20 uPa from {part}", DB, choices=(PART,)),
    Variable(
        "dba_points_{part}",
        (H, P),
        "A-weighted sound pressure level re 20 uPa of the harmonic from {part}",
        DB,
        choices=(PART,),
    ),
    Variable("points_model", (H,), "model the levels at the points come from"),
    Variable("drive_volume_velocity_peak_m3s", DRIVE, "volume velocity asked of the loudspeaker (peak)", "m^3/s"),
    Variable("drive_voltage_rms_v", DRIVE, "drive voltage (RMS)", "V"),
    Variable("drive_current_rms_a", DRIVE, "drive current (RMS)", "A"),
    Variable("drive_excursion_peak_m", DRIVE, "cone excursion (peak)", "m"),
    Variable("drive_electrical_power_w", DRIVE, "real electrical power, Re(V I*)/2", "W"),
    Variable("drive_nominal_power_w", DRIVE, "V_rms^2/Re, the quantity the power rating limits", "W"),
    Variable("drive_excursion_margin_db", DRIVE, "margin to xmax (negative: over)", DB),
    Variable("drive_power_margin_db", DRIVE, "margin to the rated power (negative: over)", DB),
    Variable("drive_checked", (S,), "the control's loudspeaker was checked (a driver is named)", flags=BOOLEAN),
    Variable(
        "drive_amplifier_voltage_margin_db",
        DRIVE,
        "margin to the rated RMS voltage of the amplifier channel "
        "feeding the control (negative: over; 0: no amplifier)",
        DB,
    ),
    Variable(
        "drive_amplifier_current_margin_db",
        DRIVE,
        "margin to the rated RMS current of the amplifier channel "
        "feeding the control (negative: over; 0: no amplifier)",
        DB,
    ),
    Variable(
        "drive_amplifier_checked",
        (S,),
        "the control is fed by an [[amplifier]] (its margins are checked)",
        flags=BOOLEAN,
    ),
    Variable(
        "catalogue_worst_margin_db",
        (S, "catalogue_driver"),
        "worst margin of each catalogue driver at each "
        "control position over every note, harmonic, demand and limit (negative: over)",
        DB,
    ),
    Variable(
        "catalogue_worst_margin_by_demand_db",
        (S, "catalogue_driver", "demand"),
        "worst margin over the designed demands and over the re-optimised ones (negative: over)",
        DB,
    ),
    Variable(
        "catalogue_passes_every_note",
        (S, "catalogue_driver"),
        "the catalogue driver passes every note at that position",
        flags=BOOLEAN,
    ),
    Variable(
        "catalogue_first_limit",
        (S, "catalogue_driver"),
        "limit met first at the worst demand: excursion, rated power, amplifier voltage or amplifier current",
    ),
    Variable("catalogue_ranked", (S,), "the catalogue was ranked at this control position", flags=BOOLEAN),
    Variable(
        "channel_spread_{channel}_computed",
        (H,),
        "the channel-error spread was computed ({channel})",
        flags=BOOLEAN,
        choices=(CHANNEL,),
    ),
    Variable(
        "channel_spread_{channel}_db",
        (H, "channel_percentile"),
        "power attenuation at these percentiles of builds with channel errors ({channel}; 0: not computed)",
        DB,
        choices=(CHANNEL,),
    ),
    Variable(
        "channel_designed_{channel}_db",
        (H,),
        "power attenuation with exact channels ({channel})",
        DB,
        choices=(CHANNEL,),
    ),
    Variable(
        "channel_gain_needed_{channel}_db",
        (H,),
        "gain tolerance (phase exact) keeping 95 % of builds within max_loss_db ({channel})",
        DB,
        choices=(CHANNEL,),
    ),
    Variable(
        "channel_phase_needed_{channel}_deg",
        (H,),
        "phase tolerance (gain exact) keeping 95 % of builds within max_loss_db ({channel})",
        "degree",
        choices=(CHANNEL,),
    ),
    Variable("primary_strength_route", (H,), "how the note's level became the primary strength: bem or monopole"),
    Variable("primary_strength_used_m3s", (H,), "total primary strength used (peak)", "m^3/s"),
    Variable(
        "primary_strength_monopole_m3s",
        (H,),
        "primary strength of a free-field monopole giving the note's level at the measurement distance (peak)",
        "m^3/s",
    ),
    Variable(
        "primary_strength_bem_m3s",
        (H,),
        "primary strength giving the note's level in the BEM's field at the measurement point (peak; 0: not computed)",
        "m^3/s",
    ),
    Variable("primary_strength_bem_computed", (H,), "the BEM gave the primary strength", flags=BOOLEAN),
    Variable(
        "primary_strength_bem_minus_monopole_db",
        (H,),
        "20 log10 of the BEM's over the monopole's primary strength (0: not computed)",
        DB,
    ),
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
