"""Errors that reach the user as a message and exit code 2, never as a traceback."""


class BemcheckInputError(Exception):
    """Bad input from the user: a case file, a mesh file, an output folder.

    The message names the file, the key or element, and what was expected.
    The command line turns it into that message on stderr and exit code 2.
    """


class CaseError(BemcheckInputError):
    """A case file that cannot be read or does not describe a valid layout.

    Examples
    --------
    >>> str(CaseError("demo.toml: body[0].size: expected 3 positive numbers"))
    'demo.toml: body[0].size: expected 3 positive numbers'
    """


class GeometryError(BemcheckInputError):
    """A body or scene that cannot be meshed into a valid scatterer."""


class EnvironmentProblem(Exception):
    """The machine lacks something bemcheck needs (a system library, a device).

    The message says what is missing and the command that installs it.
    """
