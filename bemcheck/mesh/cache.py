"""On-disk cache of body meshes, keyed by what determines them."""

import hashlib
import io
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
# The name under which an entry records its own key.
_KEY = "__key__"
# Every .npz is a zip archive: its first local file header starts so (PKWARE APPNOTE.TXT, sec. 4.3.7).
_ZIP_MAGIC = b"PK\x03\x04"


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
    h.update(
        json.dumps(
            {
                "format": FORMAT,
                "kind": kind,
                "shape": {k: _jsonable(v) for k, v in asdict(shape).items()},
                "size": None if element_size is None else repr(float(element_size)),
                "extra": {k: _jsonable(v) for k, v in (extra or {}).items()},
            },
            sort_keys=True,
        ).encode()
    )
    for blob in sources:
        h.update(hashlib.sha256(blob).digest())
    return h.hexdigest()


def load(cache_dir, key):
    """The arrays stored under ``key``, or None if absent, unreadable or not this key's.

    Any entry that cannot be read whole (cut short, garbage, empty, a
    folder: zip CRC-32 checks every member, PKWARE APPNOTE.TXT sec. 4.4.7)
    or that records another key is a miss: the mesh is made again and the
    entry replaced.
    """
    path = Path(cache_dir) / f"{key}.npz"
    try:
        data = path.read_bytes()
        if not data.startswith(_ZIP_MAGIC):
            return None
        with np.load(io.BytesIO(data), allow_pickle=False) as z:
            arrays = {k: z[k] for k in z.files}
        if str(arrays.pop(_KEY, "")) != key:
            return None
        return arrays
    except Exception:  # whatever the damage, the answer is the same: a miss
        return None


def store(cache_dir, key, arrays):
    """Write ``arrays`` under ``key`` atomically (flushed temporary, fsync, rename); the entry records ``key``.

    A cache that cannot be written is not an error: the run goes on without it.
    """
    cache_dir = Path(cache_dir)
    tmp = None
    try:
        cache_dir.mkdir(parents=True, exist_ok=True)
        with tempfile.NamedTemporaryFile(dir=cache_dir, prefix=key, suffix=".tmp", delete=False) as f:
            tmp = f.name
            np.savez(f, **{_KEY: np.array(key)}, **arrays)
            f.flush()
            # on disk before the rename: a crash must not leave a named entry with missing blocks
            os.fsync(f.fileno())
        os.replace(tmp, cache_dir / f"{key}.npz")
    except OSError as exc:
        if tmp is not None and os.path.exists(tmp):
            os.unlink(tmp)
        warnings.warn(f"mesh cache {cache_dir}: cannot write ({exc}); going on without it", MeshNotice, stacklevel=3)
