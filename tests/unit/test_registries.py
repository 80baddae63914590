"""Each extension point is one registry, and every entry in it is complete."""

import importlib
import inspect

import pytest

from bemcheck.case.objectives import OBJECTIVES
from bemcheck.case.shapes import SHAPES
from bemcheck.solvers.control.strengths import STRENGTHS


@pytest.mark.parametrize("kind", sorted(SHAPES))
def test_every_body_kind_has_its_script(kind):
    """A body kind meshed by gmsh names a geometry script that builds it and knows its exact area and volume."""
    shape = SHAPES[kind]
    assert shape.KIND == kind
    if shape.SCRIPT is None:
        return
    script = importlib.import_module(f"bemcheck.geometry_scripts.{shape.SCRIPT}")
    assert callable(script.build) and callable(script.solid_measures)
    # the script takes the shape's arguments, then the mesh size and a geometric-tolerance scale
    assert list(inspect.signature(script.build).parameters)[-3:] == ["size", "scale", "refinements"]


@pytest.mark.parametrize("kind", sorted(OBJECTIVES))
def test_every_objective_has_its_strengths(kind):
    assert OBJECTIVES[kind] in STRENGTHS, f"add the strengths of objective {kind!r} to STRENGTHS"


def test_no_strengths_without_an_objective():
    assert set(STRENGTHS) == set(OBJECTIVES.values())
