"""The ``[[amplifier]]`` tables: the rated output of the amplifier channels that feed the controls.

An entry describes one amplifier model by the rating of each of its channels
and lists the control sources it feeds, one channel each::

    [[amplifier]]
    name = "four_channel"
    rated_voltage_rms = 20.0    # V, per channel, into the rated load
    rated_current_rms = 5.0     # A, per channel
    controls = ["ctl_up", "ctl_left"]

The reference goes from the amplifier to the controls so that reading it
touches no other table; a control fed by no amplifier is checked against its
loudspeaker alone.  The physics (voltage and current a loudspeaker draws) is
in :mod:`bemcheck.prebuild.amplifiers`.
"""

from dataclasses import dataclass

from bemcheck.case.limits import CURRENT_RMS, VOLTAGE_RMS
from bemcheck.errors import CaseError


@dataclass(frozen=True)
class Amplifier:
    """One amplifier model and the control sources it feeds, one channel each.

    Parameters
    ----------
    name : str
    rated_voltage_rms : float
        Largest RMS output voltage of a channel [V].
    rated_current_rms : float
        Largest RMS output current of a channel [A].
    controls : tuple of str
        Names of the control sources fed by a channel of this amplifier.

    Examples
    --------
    >>> a = Amplifier("amp", 20.0, 5.0, ("c1",))
    >>> a.rated_voltage_rms * a.rated_current_rms
    100.0
    """

    name: str
    rated_voltage_rms: float
    rated_current_rms: float
    controls: tuple[str, ...]


def _amplifier(r, controls):
    name = r.string("name")
    voltage = r.number("rated_voltage_rms", positive=True, within=VOLTAGE_RMS)
    current = r.number("rated_current_rms", positive=True, within=CURRENT_RMS)
    fed = r.raw("controls")
    if not isinstance(fed, list) or not fed:
        r.fail("controls", "a list of at least one control source name", fed)
    for i, c in enumerate(fed):
        if not isinstance(c, str) or c not in controls:
            known = ", ".join(controls) or "the case has none"
            r.fail(f"controls[{i}]", f'the name of a source with role = "control" ({known})', c)
    r.done()
    return Amplifier(name=name, rated_voltage_rms=voltage, rated_current_rms=current, controls=tuple(fed))


def read_amplifiers(readers, sources, file):
    """Read the ``[[amplifier]]`` tables.

    Parameters
    ----------
    readers : list of TableReader
        One per ``[[amplifier]]`` entry (``TableReader.subs("amplifier")``).
    sources : tuple of Source
        The case's sources, already read.
    file : str
        The case file, for messages.

    Returns
    -------
    tuple of Amplifier

    Raises
    ------
    CaseError
        A rating that is not a positive number within its range, a control
        name that is not a control source, a control fed by two channels or
        an amplifier name used twice.

    Examples
    --------
    >>> from bemcheck.case.reader import TableReader
    >>> from bemcheck.case.model import Source
    >>> t = {"name": "a", "rated_voltage_rms": 20.0, "rated_current_rms": 4.0, "controls": ["c"]}
    >>> read_amplifiers([TableReader(t, "amplifier[0]", "x.toml")], (Source("c", "control", (0, 0, 0)),), "x.toml")
    (Amplifier(name='a', rated_voltage_rms=20.0, rated_current_rms=4.0, controls=('c',)),)
    """
    controls = tuple(s.name for s in sources if s.role == "control")
    amplifiers = tuple(_amplifier(r, controls) for r in readers)
    names, fed_by = set(), {}
    for i, a in enumerate(amplifiers):
        if a.name in names:
            raise CaseError(f"{file}: amplifier[{i}].name: '{a.name}' is used twice; expected unique names")
        names.add(a.name)
        for j, c in enumerate(a.controls):
            if c in fed_by:
                raise CaseError(
                    f"{file}: amplifier[{i}].controls[{j}]: control '{c}' is already fed by amplifier "
                    f"'{fed_by[c]}'; expected each control on one amplifier channel"
                )
            fed_by[c] = a.name
    return amplifiers


def amplifier_of(amplifiers):
    """The amplifier feeding each control, by control name.

    Examples
    --------
    >>> amplifier_of((Amplifier("a", 20.0, 4.0, ("c1", "c2")),))["c2"].name
    'a'
    """
    return {c: a for a in amplifiers for c in a.controls}
