"""Names, dimensions, units and long names of the trade-off and acoustic-centre variables of ``explore.nc``, in one place.

Each entry: name -> (dimensions, units or None, long name).  The values are
attached by :func:`bemcheck.explore.results.add_case_design`.
"""

CENTRE_DESIGNS = ("predicted", "as_designed", "centred", "reoptimised")

VARIABLES = {
    "tradeoff_power_attenuation_db": (("model", "frequency", "alpha"), "dB",
                                      "power attenuation of the case's controls minimising (1 - alpha) W/W_u + alpha P/P_u"),
    "tradeoff_sector_attenuation_db": (("model", "frequency", "alpha"), "dB",
                                       "attenuation of the mean-square far-field pressure in the trade-off sector, same controls"),
    "tradeoff_power_attenuation_error_db": (("model", "frequency", "alpha"), "dB",
                                            "numerical error of tradeoff_power_attenuation_db (zero in the free field)"),
    "tradeoff_sector_attenuation_error_db": (("model", "frequency", "alpha"), "dB",
                                             "numerical error of tradeoff_sector_attenuation_db (zero in the free field)"),
    "tradeoff_objective_power_attenuation_db": (("model", "frequency"), "dB",
                                                "power attenuation of the case's own objective optimised in each model"),
    "tradeoff_objective_sector_attenuation_db": (("model", "frequency"), "dB",
                                                 "sector attenuation of the case's own objective optimised in each model"),
    "tradeoff_as_designed_power_attenuation_db": (("frequency",), "dB",
                                                  "power attenuation of the free-field design applied with scattering"),
    "tradeoff_as_designed_sector_attenuation_db": (("frequency",), "dB",
                                                   "sector attenuation of the free-field design applied with scattering"),
    "centre_position": (("frequency", "centred_source", "xyz"), "m",
                        "acoustic centre: monopole position fitted to the source's far field with its own body only"),
    "centre_designed_position": (("centred_source", "xyz"), "m", "the source's position in the free-field model"),
    "centre_offset": (("frequency", "centred_source"), "m", "distance from the designed position to the acoustic centre"),
    "centre_fit_residual": (("frequency", "centred_source"), "1",
                            "relative RMS misfit of the fitted monopole over the fit directions (0: a monopole)"),
    "centre_amplitude_db": (("frequency", "centred_source"), "dB",
                            "20 log10 of the fitted monopole's amplitude over a free monopole of the same strength"),
    "centre_design_attenuation_db": (("centre_design", "frequency"), "dB",
                                     "power attenuation: free-field prediction, as designed, free-field design with the "
                                     "acoustic centres, re-optimised; the last three with scattering"),
    "centre_design_attenuation_error_db": (("centre_design", "frequency"), "dB",
                                           "numerical error of centre_design_attenuation_db"),
    "centre_recovered_db": (("frequency",), "dB",
                            "attenuation regained with scattering by designing with the acoustic centres (centred - as designed)"),
    "centre_loss_db": (("frequency",), "dB", "as-designed loss: free-field prediction minus the as-designed attenuation"),
}

COORDINATES = {
    "alpha": (None, "weight of the sector's mean-square pressure against the radiated power (0 power, 1 sector)"),
    "centred_source": (None, "a case source on a body, whose acoustic centre is fitted"),
    "centre_design": (None, "design evaluated: " + ", ".join(CENTRE_DESIGNS)),
}


def attributes(name):
    """CF attributes of a variable or coordinate: units (where it has one) and long_name.

    Examples
    --------
    >>> attributes("centre_offset")
    {'units': 'm', 'long_name': 'distance from the designed position to the acoustic centre'}
    """
    units, long_name = VARIABLES[name][1:] if name in VARIABLES else COORDINATES[name]
    return ({"units": units} if units else {}) | {"long_name": long_name}
