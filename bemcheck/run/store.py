"""Per-task results of a sweep, each stored atomically as soon as it is done.

A run folder holds ``parts/<task key>.npz``.  A task's key is a hash of
everything its answer depends on (the case's physics, the task's frequency
and mesh size), so a rerun recomputes only what a changed case changes, and a
file either is complete (it was renamed into place) or does not exist.
"""

import io
import json
import os
from pathlib import Path

import numpy as np

from bemcheck.errors import BemcheckInputError

from bemcheck.run.results import NonFiniteResult, atomic_write_bytes

PARTS = "parts"
LOCK = ".bemcheck.lock"


class PartStore:
    """The finished tasks of one run folder.

    Parameters
    ----------
    folder : str or Path
        The run folder.
    """

    def __init__(self, folder):
        self.dir = Path(folder) / PARTS
        self.dir.mkdir(parents=True, exist_ok=True)

    def path(self, key):
        return self.dir / f"{key}.npz"

    def has(self, key):
        return self.path(key).is_file()

    def save(self, key, arrays, meta):
        """Store ``arrays`` (name -> ndarray) and ``meta`` (JSON-able dict) under ``key``, atomically.

        Arrays holding NaN or inf are refused (:class:`NonFiniteResult`) and
        nothing is stored, so a rerun solves the task again rather than
        reusing a broken answer.
        """
        for name, values in arrays.items():
            values = np.asarray(values)
            if np.issubdtype(values.dtype, np.number) and not np.isfinite(values).all():
                raise NonFiniteResult(f"task {key}: '{name}' holds NaN or inf; nothing was stored")
        buf = io.BytesIO()
        np.savez(buf, __meta__=np.array(json.dumps(meta)), **arrays)
        atomic_write_bytes(self.path(key), buf.getvalue())

    def load(self, key):
        """(arrays, meta) stored under ``key``."""
        with np.load(self.path(key), allow_pickle=False) as z:
            arrays = {k: z[k] for k in z.files if k != "__meta__"}
            meta = json.loads(str(z["__meta__"]))
        return arrays, meta


class RunLock:
    """An exclusive lock on a run folder, so two runs never interleave their writes.

    The lock file holds the owner's process id; a lock left by a process that
    no longer exists (a run killed with SIGKILL) is taken over.  Whoever takes
    the lock removes the temporaries (``.*.part``) of writes such a run cut
    short: no other run can be writing them.  Releasing the lock removes its
    own, which an interrupt can leave behind.
    """

    def __init__(self, folder):
        self.path = Path(folder) / LOCK
        self.held = False

    def __enter__(self):
        for _ in range(2):
            try:
                fd = os.open(self.path, os.O_CREAT | os.O_EXCL | os.O_WRONLY)
            except FileExistsError:
                if self._stale():
                    self.path.unlink(missing_ok=True)
                    continue
                raise BemcheckInputError(
                    f"{self.path.parent}: another bemcheck run is writing into this folder "
                    f"(lock file {self.path.name}); wait for it or choose another --out"
                ) from None
            with os.fdopen(fd, "w") as fh:
                fh.write(str(os.getpid()))
            self.held = True
            self._remove_temporaries()
            return self
        raise BemcheckInputError(f"{self.path}: cannot take the run folder's lock")

    def _remove_temporaries(self):
        for folder in (self.path.parent, self.path.parent / PARTS):
            for tmp in folder.glob(".*.part"):
                tmp.unlink(missing_ok=True)

    def _stale(self):
        try:
            pid = int(self.path.read_text().strip() or "0")
        except (OSError, ValueError):
            return True
        if pid <= 0:
            return True
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            return True
        except PermissionError:
            return False
        return False

    def __exit__(self, *exc):
        if self.held:
            # Ctrl-C can land inside tempfile.mkstemp, after the file exists and
            # before its name is known to the writer's cleanup; the holder of
            # the lock is the only writer, so its temporaries can go here.
            self._remove_temporaries()
            self.path.unlink(missing_ok=True)
            self.held = False
