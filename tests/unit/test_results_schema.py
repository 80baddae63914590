"""The schema of the results files: a variable is declared once, or it is not written; the README's
tables are the schema's; summary.json keys name their units."""

from pathlib import Path

import numpy as np
import pytest
import xarray as xr

from bemcheck.results.cf import TABLE_BLOCK, Choice, Flags, Schema, SchemaError, Variable, annotate, markdown_rows
from bemcheck.results.files import write_dataset
from bemcheck.results.schema import EXPLORE, RESULTS
from tests.support.probe_runs import probe_runs

README = Path(__file__).resolve().parents[2] / "README.md"
TINY = Schema(
    "tiny.nc",
    (
        Variable("x", ("x",), "position", "m", coordinate=True),
        Variable(
            "p_{model}",
            ("x",),
            "pressure {model}",
            "Pa",
            choices=(Choice("model", (("free", "free"), ("bem", "BEM"))),),
        ),
    ),
)


def test_an_undeclared_variable_is_refused_and_nothing_is_written(tmp_path):
    ds = xr.Dataset({"p_free": ("x", [1.0]), "p_new": ("x", [2.0])}, coords={"x": [0.0]})
    with pytest.raises(SchemaError, match=r"tiny.nc: variable 'p_new' is not declared in bemcheck/results/schema.py"):
        write_dataset(ds, tmp_path / "r.nc", TINY)
    assert list(tmp_path.iterdir()) == []


def test_declared_dims_and_kind_are_held():
    with pytest.raises(SchemaError, match=r"'p_bem' has dims \('y',\), declared \('x',\)"):
        annotate(xr.Dataset({"p_bem": ("y", [1.0])}, coords={"x": [0.0]}), TINY)
    with pytest.raises(SchemaError, match="'p_free' is declared as a data variable"):
        annotate(xr.Dataset(coords={"x": [0.0], "p_free": ("x", [1.0])}), TINY)


def test_attributes_come_from_the_schema_whatever_the_producer_set():
    ds = xr.Dataset({"p_bem": ("x", [1.0], {"units": "bar", "long_name": "old"})}, coords={"x": [0.0]})
    out = annotate(ds, TINY)
    assert out["p_bem"].attrs == {"long_name": "pressure BEM", "units": "Pa"}
    assert out.attrs["Conventions"] == "CF-1.10" and ds["p_bem"].attrs["units"] == "bar"


def test_booleans_get_byte_flag_values():
    s = Schema("b.nc", (Variable("ok", ("x",), "fine", flags=Flags((0, 1), ("no", "yes"))),))
    out = annotate(xr.Dataset({"ok": ("x", [True, False])}), s)
    assert out["ok"].attrs["flag_values"].dtype == np.int8 and out["ok"].attrs["flag_meanings"] == "no yes"


@pytest.mark.parametrize(
    "make, message",
    [
        (lambda: Variable("p_{model}", (), "p"), r"placeholders \['model'\] but choices \[\]"),
        (lambda: Variable("f", (), "f", "1", flags=Flags((0,), ("x",))), "not units"),
        (lambda: Flags((0, 1), ("one",)), "one word"),
        (lambda: Flags((0,), ("two words",)), "one word"),
        (
            lambda: Schema("d.nc", (Variable("a", (), "a", "1"), Variable("a", (), "b", "1"))),
            "declared more than once: a",
        ),
    ],
)
def test_malformed_declarations_are_refused(make, message):
    with pytest.raises(SchemaError, match=message):
        make()


def _readme_rows(file):
    blocks = {m.group("file"): m.group("table") for m in TABLE_BLOCK.finditer(README.read_text())}
    assert file in blocks, f"README.md has no <!-- schema:{file} --> table"
    rows = [line for line in blocks[file].splitlines() if line.startswith("| `")]
    return {line.split(" | ")[0]: line for line in rows}


@pytest.mark.parametrize("schema", [RESULTS, EXPLORE], ids=lambda s: s.file)
def test_the_readme_tables_are_the_schemas(schema):
    """Every declared variable has its row, with its dims, units and meaning; no row names a
    variable the schema does not declare. Refill with `python -m bemcheck.results.readme README.md`."""
    readme = _readme_rows(schema.file)
    declared = {line.split(" | ")[0]: line for line in markdown_rows(schema)}
    assert not sorted(declared.keys() - readme.keys()), "declared, missing from README.md"
    assert not sorted(readme.keys() - declared.keys()), "in README.md, not declared"
    differ = [k for k in declared if declared[k] != readme[k]]
    assert not differ, f"README.md rows differ from the schema (dims, units or meaning): {differ}"


# Keys of numbers without a unit: counts and ratios.
DIMENSIONLESS = {"elements", "elements_per_wavelength", "harmonic", "trials"}
UNIT_SUFFIXES = ("_hz", "_db", "_dba", "_deg", "_m", "_m3s", "_w", "_v", "_a", "_s")


def _number_keys(node, key="", parent=""):
    """(key, the key holding it) of every number in a JSON tree (lists take their key's name)."""
    if isinstance(node, dict):
        return [k for name, value in node.items() for k in _number_keys(value, name, key)]
    if isinstance(node, list):
        return [k for value in node for k in _number_keys(value, key, parent)]
    if isinstance(node, (int, float)) and not isinstance(node, bool):
        return [(key, parent)]
    return []


@pytest.mark.parametrize("model", ["free", "both", "example"])
def test_summary_keys_name_their_units(model):
    """A number in summary.json sits under a key ending in its unit, or is a count or ratio;
    the members of an object under a key with a unit (min, mean, max, ...) are in that unit
    (the README's results section)."""
    bad = set()
    for key, parent in _number_keys(probe_runs().summaries[model]):
        if not (key.endswith(UNIT_SUFFIXES) or key in DIMENSIONLESS or parent.endswith(UNIT_SUFFIXES)):
            bad.add(key)
    assert not bad, f"summary.json keys holding numbers without a unit in the name: {sorted(bad)}"
