"""On-disk cache of body meshes, keyed by what determines them."""

import hashlib
import json
import os
import tempfile
import warnings
from dataclasses import asdict
from pathlib import Path

import numpy as np

from bemcheck.mesh.checks import MeshNotice

# Bump when the stored layout or the meaning of a key changes.
FORMAT = 1


def default_cache_dir():
    """``$XDG_CACHE_HOME/bemcheck/meshes``, or ``~/.cache/bemcheck/meshes``."""
    base = os.environ.get("XDG_CACHE_HOME") or Path.home() / ".cache"
    return Path(base) / "bemcheck" / "meshes"


def _jsonable(value):
    if isinstance(value, Path):
        return str(value)
    if isinstance(value, (list, tuple)):
        return [_jsonable(v) for v in value]
    if isinstance(value, float):
        return repr(value)
    return value


def digest(kind, shape, element_size, sources=(), extra=None):
    """A hex digest naming one body mesh.

    Parameters
    ----------
    kind : str
        Body kind.
    shape : dataclass
        The shape parameters (a case dataclass).
    element_size : float or None
        Target size [m]; None for meshes that do not depend on it (files).
    sources : iterable of bytes
        Contents that also determine the mesh: the gmsh script's source, a
        mesh file's bytes.
    extra : dict, optional
        Other settings that change the mesh.
    """
    h = hashlib.sha256()
    h.update(json.dumps({"format": FORMAT, "kind": kind,
                         "shape": {k: _jsonable(v) for k, v in asdict(shape).items()},
                         "size": None if element_size is None else repr(float(element_size)),
                         "extra": {k: _jsonable(v) for k, v in (extra or {}).items()}},
                        sort_keys=True).encode())
    for blob in sources:
        h.update(hashlib.sha256(blob).digest())
    return h.hexdigest()


def load(cache_dir, key):
    """The arrays stored under ``key``, or None if absent or unreadable."""
    path = Path(cache_dir) / f"{key}.npz"
    try:
        with np.load(path, allow_pickle=False) as data:
            return {k: data[k] for k in data.files}
    except (OSError, ValueError, KeyError):
        # a missing or damaged entry is a miss: the mesh is made again
        return None


def store(cache_dir, key, arrays):
    """Write ``arrays`` under ``key`` atomically (temporary name, then rename).

    A cache that cannot be written is not an error: the run goes on without it.
    """
    cache_dir = Path(cache_dir)
    tmp = None
    try:
        cache_dir.mkdir(parents=True, exist_ok=True)
        with tempfile.NamedTemporaryFile(dir=cache_dir, prefix=key, suffix=".tmp",
                                         delete=False) as f:
            tmp = f.name
            np.savez(f, **arrays)
        os.replace(tmp, cache_dir / f"{key}.npz")
    except OSError as exc:
        if tmp is not None and os.path.exists(tmp):
            os.unlink(tmp)
        warnings.warn(f"mesh cache {cache_dir}: cannot write ({exc}); going on without it",
                      MeshNotice, stacklevel=3)
