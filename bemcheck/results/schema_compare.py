"""The comparison's variables of results.nc: departures, trust, attenuation and the verdict's figures (declared in the schema)."""

from bemcheck.results.cf import BOOLEAN, Variable
from bemcheck.results.cf import DECIBEL as DB
from bemcheck.results.schema_choices import DESIGN, FGD, FSD, FSG, STATUS, WORLD, D, F, P, S

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
