"""Before-build checks: drivers, notes, placement tolerance, safety.

Pure functions on numbers and frozen dataclasses; the case loader and the
run wire them to a case file.  Complex amplitudes are peak values with the
time factor exp(-iωt); SPL is RMS, dB re 20 µPa.
"""

from bemcheck.case.drivers import Driver, check_driver, driver_problems
from bemcheck.prebuild.drivers import (
    ClosedBox,
    Drive,
    closed_box,
    cone_velocity_per_volt,
    drive_for,
    excursion_limited_volume_velocity,
    excursion_per_volt,
    rated_voltage,
    volume_velocity_at_rated_power,
    volume_velocity_per_volt,
)
from bemcheck.prebuild.notes import Demand, DriverCheck, DriveRow, check_drivers, primary_volume_velocity
from bemcheck.prebuild.placement import HarmonicPlacement, PlacementStudy, Study, placement_study
from bemcheck.prebuild.safety import DEFAULT_LIMIT_DBA, EarLevels, a_weighting, ear_levels, overall_dba, sum_levels
from bemcheck.prebuild.scattered import MovedImpedance, StoredSolve
from bemcheck.prebuild.tolerance import PlacementSpread, ToleranceNeed, placement_spread, tolerance_for_loss

__all__ = [
    "ClosedBox",
    "DEFAULT_LIMIT_DBA",
    "Demand",
    "Drive",
    "DriveRow",
    "Driver",
    "DriverCheck",
    "EarLevels",
    "HarmonicPlacement",
    "MovedImpedance",
    "PlacementSpread",
    "PlacementStudy",
    "StoredSolve",
    "Study",
    "ToleranceNeed",
    "a_weighting",
    "check_driver",
    "check_drivers",
    "closed_box",
    "cone_velocity_per_volt",
    "drive_for",
    "driver_problems",
    "ear_levels",
    "excursion_limited_volume_velocity",
    "excursion_per_volt",
    "overall_dba",
    "placement_spread",
    "placement_study",
    "primary_volume_velocity",
    "rated_voltage",
    "sum_levels",
    "tolerance_for_loss",
    "volume_velocity_at_rated_power",
    "volume_velocity_per_volt",
]
