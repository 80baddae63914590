"""Strict reading of one TOML table: every key checked, every unknown key refused.

Each error names the file, the key path (``source[2].at``) and what was
expected, as a :class:`~bemcheck.errors.CaseError`.
"""

import math

from bemcheck.errors import CaseError

REQUIRED = object()


class TableReader:
    """Read typed values from one TOML table and refuse what is left over.

    Parameters
    ----------
    table : dict
        The parsed TOML table.
    path : str
        Key path of the table, e.g. ``"body[1]"`` ("" for the top level).
    file : str
        Case file name for messages.
    """

    def __init__(self, table, path, file):
        if not isinstance(table, dict):
            raise CaseError(f"{file}: {path or 'top level'}: expected a table, got {_kind(table)}")
        self.table = table
        self.path = path
        self.file = file
        self._seen = set()

    def key(self, name):
        """Full key path of ``name`` in this table."""
        return f"{self.path}.{name}" if self.path else name

    def fail(self, name, expected, value=None):
        """Raise a CaseError about key ``name``."""
        got = "" if value is None else f", got {_show(value)}"
        raise CaseError(f"{self.file}: {self.key(name)}: expected {expected}{got}")

    def has(self, name):
        return name in self.table

    def raw(self, name, default=REQUIRED):
        self._seen.add(name)
        if name not in self.table:
            if default is REQUIRED:
                raise CaseError(f"{self.file}: {self.key(name)}: required key is missing")
            return default
        return self.table[name]

    def string(self, name, default=REQUIRED, choices=None):
        value = self.raw(name, default)
        if value is default and default is not REQUIRED:
            return value
        if not isinstance(value, str) or not value.strip():
            self.fail(name, "a non-empty string", value)
        if choices is not None and value not in choices:
            self.fail(name, "one of " + ", ".join(repr(c) for c in choices), value)
        return value

    def number(self, name, default=REQUIRED, positive=False, non_negative=False, low=None, high=None, within=None):
        value = self.raw(name, default)
        if value is default and default is not REQUIRED:
            return value
        return self.check_number(name, value, positive, non_negative, low, high, within)

    def check_number(self, name, value, positive=False, non_negative=False, low=None, high=None, within=None):
        """``value`` as a float, refused unless finite and within the bounds given.

        ``within`` is a :class:`~bemcheck.case.limits.Range`: a physical range
        stated with its unit, named in the message.
        """
        if isinstance(value, bool) or not isinstance(value, int | float):
            self.fail(name, "a number", value)
        value = float(value)
        if not math.isfinite(value):
            self.fail(name, "a finite number", value)
        if positive and value <= 0.0:
            self.fail(name, "a positive number", value)
        if non_negative and value < 0.0:
            self.fail(name, "a number ≥ 0", value)
        if low is not None and value < low:
            self.fail(name, f"a number ≥ {low:g}", value)
        if high is not None and value > high:
            self.fail(name, f"a number ≤ {high:g}", value)
        if within is not None and not within.low <= value <= within.high:
            self.fail(name, within.expected(), value)
        return value

    def integer(self, name, default=REQUIRED, low=None, high=None):
        value = self.raw(name, default)
        if value is default and default is not REQUIRED:
            return value
        if isinstance(value, bool) or not isinstance(value, int):
            self.fail(name, "a whole number", value)
        if low is not None and value < low:
            self.fail(name, f"a whole number ≥ {low}", value)
        if high is not None and value > high:
            self.fail(name, f"a whole number ≤ {high:,}", value)
        return value

    def boolean(self, name, default=REQUIRED):
        value = self.raw(name, default)
        if not isinstance(value, bool):
            self.fail(name, "true or false", value)
        return value

    def numbers(self, name, default=REQUIRED, length=None, positive=False, min_length=1, within=None):
        value = self.raw(name, default)
        if value is default and default is not REQUIRED:
            return value
        what = f"a list of {length} numbers" if length else f"a list of at least {min_length} number(s)"
        if positive:
            what = what.replace("numbers", "positive numbers").replace("number(s)", "positive number(s)")
        if not isinstance(value, list) or (length and len(value) != length) or len(value) < min_length:
            self.fail(name, what, value)
        out = []
        for i, v in enumerate(value):
            out.append(self.check_number(f"{name}[{i}]", v, positive=positive, within=within))
        return tuple(out)

    def vector(self, name, default=REQUIRED, nonzero=False, within=None):
        """[x, y, z]; each component within ``within`` (a position), or, for a direction
        (``nonzero``), a largest component within it."""
        value = self.numbers(name, default, length=3, within=None if nonzero else within)
        if nonzero and value is not default and not any(value):
            self.fail(name, "a non-zero direction [x, y, z]", list(value))
        if nonzero and within is not None and value is not default:
            if not within.low <= max(abs(v) for v in value) <= within.high:
                self.fail(name, within.expected(), list(value))
        return value

    def sub(self, name, default=REQUIRED):
        """A reader for the sub-table ``name`` (``None`` if absent and optional)."""
        value = self.raw(name, default)
        if value is None and default is None:
            return None
        if not isinstance(value, dict):
            self.fail(name, "a table", value)
        return TableReader(value, self.key(name), self.file)

    def subs(self, name, min_length=0):
        """Readers for an array of tables ``name``."""
        value = self.raw(name, [])
        if not isinstance(value, list) or not all(isinstance(v, dict) for v in value):
            self.fail(name, "an array of tables", value)
        if len(value) < min_length:
            self.fail(name, f"at least {min_length} entr{'y' if min_length == 1 else 'ies'}")
        return [TableReader(v, f"{self.key(name)}[{i}]", self.file) for i, v in enumerate(value)]

    def done(self):
        """Refuse keys that were never read."""
        unknown = sorted(set(self.table) - self._seen)
        if unknown:
            known = ", ".join(sorted(self._seen)) or "none"
            raise CaseError(f"{self.file}: {self.key(unknown[0])}: unknown key (keys allowed here: {known})")


def _kind(value):
    return {dict: "a table", list: "a list", str: "a string", bool: "a boolean"}.get(type(value), type(value).__name__)


def _show(value):
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."
