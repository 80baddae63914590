"""A control loudspeaker's data as the case gives it: Thiele–Small parameters and their validation.

The physics of the driver in its closed box is in :mod:`bemcheck.prebuild.drivers`;
this module is the data, on the case's floor, so that reading a case never needs
the before-build checks.
"""

import math
from dataclasses import dataclass, fields

from bemcheck.errors import CaseError


@dataclass(frozen=True)
class Driver:
    """Small-signal (Thiele-Small) parameters of a loudspeaker in its closed box.

    Parameters
    ----------
    name : str
    re : float, voice-coil DC resistance [Ω]
    bl : float, force factor [T·m]
    mms : float, moving mass including air load [kg]
    cms : float, suspension compliance [m/N]
    rms : float, mechanical resistance of the suspension [kg/s]
    sd : float, effective cone area [m²]
    xmax : float, one-way linear excursion (peak) [m]
    vb : float, net internal volume of the closed box [m³]
    rated_power : float, power rating [W], taken as V_rms²/Re (see
        :func:`rated_voltage`)
    le : float, voice-coil inductance [H]; 0 neglects it.

    Examples
    --------
    >>> d = Driver("demo", re=6.0, bl=7.0, mms=0.020, cms=1e-3, rms=1.5,
    ...            sd=0.0133, xmax=5e-3, vb=0.020, rated_power=50.0)
    >>> driver_problems(d)
    []
    """

    name: str
    re: float
    bl: float
    mms: float
    cms: float
    rms: float
    sd: float
    xmax: float
    vb: float
    rated_power: float
    le: float = 0.0


_UNITS = {
    "re": "Ω",
    "bl": "T·m",
    "mms": "kg",
    "cms": "m/N",
    "rms": "kg/s",
    "sd": "m²",
    "xmax": "m",
    "vb": "m³",
    "rated_power": "W",
    "le": "H",
}


def driver_problems(driver):
    """Everything physically impossible about ``driver``, one message per key.

    Each message starts with the field name (``"xmax: ..."``) so that a case
    loader can prefix the file and table and raise :class:`CaseError`.

    Parameters
    ----------
    driver : Driver

    Returns
    -------
    list of str
        Empty when the parameters are usable.

    Examples
    --------
    >>> d = Driver("bad", re=-6.0, bl=7.0, mms=0.02, cms=1e-3, rms=1.5,
    ...            sd=0.0133, xmax=5.0, vb=0.02, rated_power=50.0)
    >>> [p.split(":")[0] for p in driver_problems(d)]
    ['re', 'xmax']
    """
    problems = []
    if not isinstance(driver.name, str) or not driver.name.strip():
        problems.append(f"name: expected a non-empty text, got {driver.name!r}")
    bad = set()
    for f in fields(driver):
        if f.name == "name":
            continue
        value = getattr(driver, f.name)
        unit = _UNITS[f.name]
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            problems.append(f"{f.name}: expected a finite number [{unit}], got {value!r}")
            bad.add(f.name)
        elif f.name == "le" and value < 0.0:
            problems.append(f"le: expected zero or a positive inductance [H], got {value!r}")
        elif f.name != "le" and value <= 0.0:
            problems.append(f"{f.name}: expected a positive number [{unit}], got {value!r}")
            bad.add(f.name)
    if bad & {"sd", "xmax"}:
        return problems
    cone_radius = math.sqrt(driver.sd / math.pi)
    if driver.xmax >= cone_radius:
        # Usually millimetres typed where metres were meant.
        problems.append(
            f"xmax: {driver.xmax!r} m is not smaller than the cone radius "
            f"{cone_radius:.4g} m implied by sd; expected a one-way excursion in metres"
        )
    elif "vb" not in bad and driver.vb <= driver.sd * driver.xmax:
        problems.append(
            f"vb: {driver.vb!r} m³ is not larger than the volume the cone sweeps "
            f"(sd·xmax = {driver.sd * driver.xmax:.4g} m³); expected the box volume in m³"
        )
    return problems


def check_driver(driver, where):
    """Return ``driver`` unchanged, or raise :class:`CaseError` listing its problems.

    Parameters
    ----------
    driver : Driver
    where : str
        Where the driver was read, e.g. ``"demo.toml: drivers.woofer"``;
        each problem is reported as ``"<where>.<key>: ..."``.

    Raises
    ------
    CaseError
    """
    problems = driver_problems(driver)
    if problems:
        raise CaseError("; ".join(f"{where}.{p}" for p in problems))
    return driver
