"""results.nc and explore.nc against the CF Metadata Conventions 1.10 and UDUNITS-2.

Reference: Eaton, B. et al. (2022), NetCDF Climate and Forecast (CF) Metadata
Conventions, version 1.10; the section of each check is named beside it.
Units are parsed by UDUNITS-2 (Unidata) through the cf-units package. Each
file is read as written (h5netcdf, no decoding), from the probe runs of
:mod:`tests.support.probe_runs`: the free-field model alone, both models,
``bemcheck explore``, and the shipped example free-pair with both models.
"""

import re

import cf_units
import h5netcdf
import numpy as np
import pytest

from bemcheck.results.cf import DECIBEL
from bemcheck.results.schema import EXPLORE, RESULTS
from tests.support.probe_runs import probe_runs

FILES = {
    "free": ("results.nc", RESULTS),
    "both": ("results.nc", RESULTS),
    "explore": ("explore.nc", EXPLORE),
    "example": ("results.nc", RESULTS),
}
# CF 1.10 sec. 3.5: flag meanings are words of alphanumerics and _ - . + @
FLAG_WORD = re.compile(r"^[A-Za-z0-9_.+@-]+$")
# CF 1.10 sec. 2.3: names begin with a letter and hold letters, digits and underscores
NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")


def _file(run):
    name, schema = FILES[run]
    return h5netcdf.File(getattr(probe_runs(), run) / name, "r"), schema


def _bounds_variables(f):
    return {v.attrs["bounds"]: name for name, v in f.variables.items() if "bounds" in v.attrs}


def _is_number(var):
    return np.issubdtype(var.dtype, np.number) or var.dtype == bool


@pytest.mark.parametrize("run", list(FILES))
def test_global_attributes(run):
    """CF 1.10 sec. 2.6.1: ``Conventions`` names the version; sec. 2.6.2: ``title``, ``history``
    and ``source`` describe the file; sec. 5: ``coordinates`` is an attribute of a variable,
    never of the file."""
    f, _ = _file(run)
    with f:
        assert f.attrs["Conventions"] == "CF-1.10"
        for key in ("title", "history", "source"):
            assert isinstance(f.attrs[key], str) and f.attrs[key].strip(), key
        assert "coordinates" not in f.attrs


@pytest.mark.parametrize("run", list(FILES))
def test_names_are_letters_digits_and_underscores(run):
    """CF 1.10 sec. 2.3: variable, dimension and attribute names begin with a letter and hold
    letters, digits and underscores (names the netCDF User Guide reserves begin with _)."""
    f, _ = _file(run)
    with f:
        names = [*f.variables, *f.dimensions, *f.attrs]
        names += [a for v in f.variables.values() for a in v.attrs]
    assert [n for n in names if not (NAME.match(n) or n.startswith("_"))] == []


@pytest.mark.parametrize("run", list(FILES))
def test_every_variable_has_a_long_name_and_units_or_flags(run):
    """CF 1.10 sec. 3.2: a long name on every variable, coordinates included; sec. 3.1: units on
    every number that is not a flag (``1`` for a dimensionless one, sec. 3.1.1), except a
    boundary variable (sec. 7.1), whose units, if given, are its coordinate's; sec. 3.5: a flag
    variable has ``flag_values`` of its own type and one ``flag_meanings`` word per value, and its
    data hold only those values; text (names) carries no units."""
    f, _ = _file(run)
    with f:
        bounds = _bounds_variables(f)
        for name, var in f.variables.items():
            attrs = var.attrs
            assert str(attrs.get("long_name", "")).strip(), f"{name}: no long_name"
            if "flag_values" in attrs:
                values, words = np.atleast_1d(attrs["flag_values"]), str(attrs["flag_meanings"]).split()
                assert len(values) == len(words) and all(FLAG_WORD.match(w) for w in words), name
                assert values.dtype == var.dtype, f"{name}: flag_values {values.dtype}, data {var.dtype}"
                assert np.isin(np.asarray(var[...]), values).all(), f"{name}: a value outside flag_values"
                assert "units" not in attrs, name
            elif name in bounds:
                parent = f.variables[bounds[name]].attrs
                assert attrs.get("units", parent.get("units")) == parent.get("units"), name
            elif _is_number(var):
                assert "units" in attrs, f"{name}: a number without units"
            else:
                assert "units" not in attrs, f"{name}: text with units"


@pytest.mark.parametrize("run", list(FILES))
def test_units_are_udunits_strings(run):
    """CF 1.10 sec. 3.1: units are strings UDUNITS recognises; the exception is ``dB``, the
    canonical unit CF's standard-name table gives to sound pressure level
    (sound_pressure_level_in_air), which UDUNITS-2 does not define."""
    f, _ = _file(run)
    with f:
        units = {str(v.attrs["units"]) for v in f.variables.values() if "units" in v.attrs}
    assert units, "no units at all"
    for u in sorted(units - {DECIBEL}):
        cf_units.Unit(u)  # raises ValueError for a string UDUNITS cannot parse


@pytest.mark.parametrize("run", list(FILES))
def test_bounds_name_a_variable_with_two_edges(run):
    """CF 1.10 sec. 7.1: a ``bounds`` attribute names a variable of the file with the
    coordinate's dimensions and one more, of size 2 for a one-dimensional coordinate."""
    f, _ = _file(run)
    with f:
        pairs = _bounds_variables(f)
        for bounds, parent in pairs.items():
            b, p = f.variables[bounds], f.variables[parent]
            assert b.dimensions[:-1] == p.dimensions and b.shape[-1] == 2
            lo, hi = np.asarray(b[...]).T
            assert np.all((lo <= p[...]) & (p[...] <= hi))
    if run == "both":
        assert pairs == {"sector_azimuth_bounds": "sector_azimuth"}


@pytest.mark.parametrize("run", list(FILES))
def test_every_variable_in_the_file_is_declared(run):
    """Every variable written is in the schema with the dims declared; a complex one as its
    real and imaginary parts, each naming which it is (common practice, no source)."""
    f, schema = _file(run)
    with f:
        for name, var in f.variables.items():
            part = var.attrs.get("bemcheck_complex_part")
            base = name[: -len("_re")] if part in ("re", "im") else name
            declared, attrs = schema.lookup(base)
            assert tuple(var.dimensions) == declared.dims, name
            assert var.attrs.get("units") == attrs.get("units") or base in _bounds_variables(f), name


def test_harmonic_carries_note_and_frequency():
    """The ``harmonic`` dimension is named by auxiliary coordinates (CF 1.10 sec. 5, the
    ``coordinates`` attribute): its note, number and frequency, here the probe's note
    at 100 and 200 Hz."""
    f, _ = _file("both")
    with f:
        coords = f.variables["q_required_designed_re"].attrs["coordinates"].split()
        assert {"harmonic_note", "harmonic_number", "harmonic_frequency"} <= set(coords)
        assert list(f.variables["harmonic_frequency"][...]) == [100.0, 200.0]
        assert f.variables["harmonic_frequency"].attrs["units"] == "Hz"
