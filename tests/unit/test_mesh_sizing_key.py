"""A mesh cached under one sizing rule is never reused under another."""

import numpy as np

from bemcheck.case.model import Body
from bemcheck.case.shapes import Sphere
from bemcheck.geometry_scripts import _sizing
from bemcheck.mesh import bodies
from bemcheck.mesh.bodies import mesh_body, mesh_key

BODY = Body("s", Sphere(0.05))


def test_key_follows_the_sizing_rule(monkeypatch):
    before = mesh_key(BODY, 0.1)
    assert mesh_key(BODY, 0.1) == before  # deterministic
    assert mesh_key(BODY, 0.1 * 1.5) != before  # the coarse self-check mesh is its own entry
    monkeypatch.setattr(_sizing, "SIZING_RULE", _sizing.SIZING_RULE + 1)
    assert mesh_key(BODY, 0.1) != before
    monkeypatch.undo()
    monkeypatch.setattr(bodies, "GEOMETRY_MARGIN", 0.5)
    assert mesh_key(BODY, 0.1) != before


def test_key_follows_the_sizing_source(monkeypatch):
    """The rule's source text enters the key, so an edited figure is a new key even without a version bump."""
    before = mesh_key(BODY, 0.1)
    real = bodies.inspect.getsource

    def edited(obj):
        text = real(obj)
        return text.replace("PER_BODY = ", "PER_BODY = 0.5 * ") if obj is _sizing else text

    monkeypatch.setattr(bodies.inspect, "getsource", edited)
    assert mesh_key(BODY, 0.1) != before


def test_a_new_rule_remeshes(tmp_path, monkeypatch):
    first = mesh_body(BODY, 0.1, tmp_path)
    assert len(list(tmp_path.glob("*.npz"))) == 1
    monkeypatch.setattr(_sizing, "SIZING_RULE", _sizing.SIZING_RULE + 1)
    monkeypatch.setattr(_sizing, "PER_BODY", 0.5 * _sizing.PER_BODY)
    second = mesh_body(BODY, 0.1, tmp_path)
    assert len(list(tmp_path.glob("*.npz"))) == 2
    assert len(second.triangles) > len(first.triangles)
    assert not np.array_equal(first.vertices.shape, second.vertices.shape)
