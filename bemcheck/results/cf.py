"""How a declared variable becomes CF attributes in a file, and how a Dataset is held to its declaration.

The declarations themselves are in :mod:`bemcheck.results.schema`; this
module holds their types (:class:`Variable`, :class:`Choice`,
:class:`Flags`, :class:`Schema`), the check made before every write
(:func:`annotate`) and the README table made from a schema.

The file follows the CF Metadata Conventions 1.10 (Eaton et al. 2022):
``Conventions`` and the global ``title``, ``history`` and ``source``
(sec. 2.6), ``units`` from UDUNITS (sec. 3.1; ``1`` for a dimensionless
number, sec. 3.1.1), ``long_name`` (sec. 3.2), ``flag_values`` with
``flag_meanings`` for flags (sec. 3.5) and ``bounds`` (sec. 7.1).
"""

import datetime
import functools
import itertools
import re
import string
from dataclasses import dataclass, field
from importlib.metadata import version

import numpy as np

CONVENTIONS = "CF-1.10"
# CF 3.1 asks for units UDUNITS can read; UDUNITS has no decibel, yet CF's own
# standard-name table gives "dB" as the canonical unit of sound pressure level.
DECIBEL = "dB"


class SchemaError(RuntimeError):
    """A Dataset holds a variable its schema does not declare, or declares otherwise: a bug, not bad input."""


@dataclass(frozen=True)
class Flags:
    """The coded values of a flag variable and one word for each (CF 1.10 sec. 3.5).

    Examples
    --------
    >>> Flags((0, 1), ("no", "yes")).meanings_text
    'no yes'
    """

    values: tuple[int, ...]
    meanings: tuple[str, ...]

    def __post_init__(self):
        if len(self.values) != len(self.meanings) or any(" " in m or not m for m in self.meanings):
            raise SchemaError(f"flags {self.values} / {self.meanings}: one word (no blanks) for each value")

    @property
    def meanings_text(self):
        """The blank-separated ``flag_meanings`` string."""
        return " ".join(self.meanings)


BOOLEAN = Flags((0, 1), ("false", "true"))


@dataclass(frozen=True)
class Choice:
    """A placeholder in variable names, e.g. ``{model}`` in ``p_{model}``: its values and what each means.

    In a name the placeholder becomes the value, in a long name the phrase.

    Examples
    --------
    >>> Choice("model", (("free", "in the free field"),)).phrases()
    {'free': 'in the free field'}
    """

    key: str
    options: tuple[tuple[str, str], ...]

    def phrases(self):
        """Value -> phrase."""
        return dict(self.options)


@dataclass(frozen=True)
class Variable:
    """One declared variable (or a family of them, when its name holds placeholders).

    Attributes
    ----------
    name : str
        Name in the file; ``{key}`` placeholders are filled from ``choices``.
    dims : tuple of str
        Dimensions, in order.
    long_name : str
        CF ``long_name``; ``{key}`` becomes the chosen option's phrase.
    units : str or None
        A UDUNITS string (``"1"``: dimensionless); None for text and flags.
    flags : Flags or None
        For a flag variable (booleans included): its values and meanings.
    coordinate : bool
        A coordinate (else a data variable).
    bounds : str or None
        Name of the variable holding this coordinate's cell bounds.
    choices : tuple of Choice
        The placeholders in ``name``.
    """

    name: str
    dims: tuple[str, ...]
    long_name: str
    units: str | None = None
    flags: Flags | None = None
    coordinate: bool = False
    bounds: str | None = None
    choices: tuple[Choice, ...] = field(default=())

    def __post_init__(self):
        keys = {f for _, f, _, _ in string.Formatter().parse(self.name) if f}
        if keys != {c.key for c in self.choices}:
            raise SchemaError(
                f"variable {self.name!r}: placeholders {sorted(keys)} but choices {sorted(c.key for c in self.choices)}"
            )
        if self.flags is not None and self.units is not None:
            raise SchemaError(f"variable {self.name!r}: a flag variable carries flag meanings, not units")

    def expand(self):
        """Every (name, attributes) this declaration stands for."""
        out = []
        for combo in itertools.product(*(c.options for c in self.choices)):
            values = {c.key: v for c, (v, _) in zip(self.choices, combo, strict=True)}
            phrases = {c.key: p for c, (_, p) in zip(self.choices, combo, strict=True)}
            attrs = {"long_name": self.long_name.format(**phrases)}
            if self.units is not None:
                attrs["units"] = self.units
            if self.flags is not None:
                attrs["flag_meanings"] = self.flags.meanings_text
            if self.bounds is not None:
                attrs["bounds"] = self.bounds
            out.append((self.name.format(**values), attrs))
        return out

    def pattern(self):
        """The name with each placeholder as ``<key>``, for the README."""
        return self.name.format(**{c.key: f"<{c.key}>" for c in self.choices})


@dataclass(frozen=True)
class Schema:
    """The variables of one kind of file.

    Examples
    --------
    >>> import xarray as xr
    >>> s = Schema("demo.nc", (Variable("x", ("x",), "position", "m", coordinate=True),))
    >>> ds = annotate(xr.Dataset(coords={"x": [0.0, 1.0]}), s)
    >>> ds["x"].attrs["units"], ds.attrs["Conventions"]
    ('m', 'CF-1.10')
    """

    file: str
    variables: tuple[Variable, ...]

    def __post_init__(self):
        names = [n for v in self.variables for n, _ in v.expand()]
        twice = sorted({n for n in names if names.count(n) > 1})
        if twice:
            raise SchemaError(f"{self.file}: declared more than once: {', '.join(twice)}")

    @functools.cached_property
    def _index(self):
        return {n: (v, attrs) for v in self.variables for n, attrs in v.expand()}

    def lookup(self, name):
        """(Variable, attributes) declared for ``name``; SchemaError if none is."""
        try:
            return self._index[name]
        except KeyError:
            raise SchemaError(
                f"{self.file}: variable {name!r} is not declared in bemcheck/results/schema.py; "
                "declare it there (name, dims, units, long_name) before writing it"
            ) from None


def annotate(ds, schema):
    """``ds`` with every variable's CF attributes from ``schema`` and ``Conventions`` set.

    Raises SchemaError for a variable not declared, or declared as a
    coordinate when it is data (or the other way), or with other dims.
    """
    out = ds.copy()
    for name in list(out.variables):
        declared, attrs = schema.lookup(name)
        var = out[name].variable
        if tuple(var.dims) != declared.dims:
            raise SchemaError(f"{schema.file}: variable {name!r} has dims {var.dims}, declared {declared.dims}")
        if (name in out.coords) != declared.coordinate:
            kind = "a coordinate" if declared.coordinate else "a data variable"
            raise SchemaError(f"{schema.file}: variable {name!r} is declared as {kind}")
        attrs = dict(attrs)
        if declared.flags is not None:
            dtype = np.int8 if var.dtype == bool else var.dtype  # netCDF stores booleans as bytes
            attrs["flag_values"] = np.array(declared.flags.values, dtype=dtype)
        var.attrs = attrs
    out.attrs = {**out.attrs, "Conventions": CONVENTIONS}
    return out


def global_attributes(title, command, now=None):
    """The CF global attributes (CF 1.10 sec. 2.6.2) of a file ``bemcheck <command>`` writes.

    Examples
    --------
    >>> a = global_attributes("A case", "run", datetime.datetime(2020, 1, 2, tzinfo=datetime.UTC))
    >>> a["history"].startswith("2020-01-02T00:00:00Z: bemcheck run"), a["Conventions"]
    (True, 'CF-1.10')
    """
    now = now or datetime.datetime.now(datetime.UTC)
    stamp = now.astimezone(datetime.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
    release = version("bemcheck")
    return {
        "Conventions": CONVENTIONS,
        "title": title,
        "history": f"{stamp}: bemcheck {command} (bemcheck {release})",
        "source": f"bemcheck {release}: free-field monopole model and Burton-Miller boundary elements "
        "(rigid bodies, P1 elements on gmsh meshes)",
    }


def _cell(text):
    return text.replace("|", "\\|")


def markdown_rows(schema):
    """One README table row per declaration: variable, dims, units, meaning."""
    rows = []
    for v in schema.variables:
        name = f"`{v.pattern()}`" + (" (coordinate)" if v.coordinate else "")
        meaning = v.long_name.format(**{c.key: f"`<{c.key}>`" for c in v.choices})
        for c in v.choices:
            meaning += f"; `<{c.key}>`: " + ", ".join(f"`{value}` {phrase}" for value, phrase in c.options)
        if v.flags is not None:
            pairs = zip(v.flags.values, v.flags.meanings, strict=True)
            meaning += "; flags: " + ", ".join(f"{val} {m}" for val, m in pairs)
        if v.bounds:
            meaning += f"; bounds in `{v.bounds}`"
        units = v.units if v.units is not None else "–"
        rows.append(f"| {name} | {', '.join(v.dims) or '–'} | {_cell(units)} | {_cell(meaning)} |")
    return rows


def markdown_table(schema):
    """The README table of ``schema``'s variables, header included."""
    return "\n".join(["| variable | dims | units | meaning |", "|---|---|---|---|", *markdown_rows(schema)])


TABLE_BLOCK = re.compile(r"(<!-- schema:(?P<file>[\w.]+) -->\n)(?P<table>.*?)(<!-- /schema -->)", re.S)


def fill_tables(text, schemas):
    r"""``text`` with every ``<!-- schema:FILE -->`` ... ``<!-- /schema -->`` block holding FILE's table.

    Examples
    --------
    >>> s = Schema("a.nc", (Variable("x", ("x",), "position", "m", coordinate=True),))
    >>> print(fill_tables("<!-- schema:a.nc -->\nold\n<!-- /schema -->", [s]))
    <!-- schema:a.nc -->
    | variable | dims | units | meaning |
    |---|---|---|---|
    | `x` (coordinate) | x | m | position |
    <!-- /schema -->
    """
    by_file = {s.file: s for s in schemas}
    return TABLE_BLOCK.sub(lambda m: m.group(1) + markdown_table(by_file[m.group("file")]) + "\n" + m.group(4), text)
