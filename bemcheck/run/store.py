"""Per-task results of a sweep, each stored atomically as soon as it is done.

A run folder holds ``parts/<task key>.npz``.  A task's key is a hash of
everything its answer depends on (the case's physics, the task's frequency
and mesh size), so a rerun recomputes only what a changed case changes, and a
file either is complete (it was renamed into place) or does not exist.  Each
part records its own key and a SHA-256 checksum of its arrays and metadata,
so a damaged file (cut short, overwritten, emptied) or a part copied over
another task's is recognised before it is used, reported and computed again.
"""

import hashlib
import io
import json
import os
import socket
import time
import warnings
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from bemcheck.errors import BemcheckInputError
from bemcheck.results.files import NonFiniteResult, atomic_write_bytes

# Version of what a task stores.  It enters every task's key
# (bemcheck.run.sweep.plan_tasks), so parts written in another format are
# never read as this one.
PART_FORMAT = 5

PARTS = "parts"
LOCK = ".bemcheck.lock"
# A lock file still empty this long after it was made was left by a process
# killed between creating and writing it (common practice, no source).
LOCK_GRACE_S = 10.0
# The largest process id a lock may name (2^31 - 1, the largest 32-bit pid_t).
PID_MAX = 2**31 - 1
# Every .npz is a zip archive: its first local file header starts so (PKWARE APPNOTE.TXT, sec. 4.3.7).
_ZIP_MAGIC = b"PK\x03\x04"


class DamagedPart(UserWarning):
    """A stored part that does not prove what it is: it is reported and computed again, never used."""


def checksum(arrays, meta):
    """SHA-256 (hex) of ``arrays`` (name -> ndarray: names, dtypes, shapes and bytes) and ``meta``.

    Examples
    --------
    >>> a = checksum({"x": np.arange(3.0)}, {"n": 3})
    >>> a == checksum({"x": np.arange(3.0)}, {"n": 3}), a == checksum({"x": np.arange(3.0) + 1}, {"n": 3})
    (True, False)
    """
    h = hashlib.sha256(json.dumps(meta, sort_keys=True).encode())
    for name in sorted(arrays):
        values = np.ascontiguousarray(arrays[name])
        h.update(f"|{name}|{values.dtype.str}|{values.shape}|".encode())
        h.update(values.tobytes())
    return h.hexdigest()


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
        """Whether a part that passes its checks is stored under ``key``."""
        return self.path(key).is_file() and self.problem(key) is None

    def save(self, key, arrays, meta):
        """Store ``arrays`` (name -> ndarray) and ``meta`` (JSON-able dict) under ``key``, atomically.

        Arrays holding NaN or inf are refused (:class:`NonFiniteResult`) and
        nothing is stored, so a rerun solves the task again rather than
        reusing a broken answer.  The part records ``key`` and its checksum.
        """
        for name, values in arrays.items():
            values = np.asarray(values)
            if np.issubdtype(values.dtype, np.number) and not np.isfinite(values).all():
                raise NonFiniteResult(f"task {key}: '{name}' holds NaN or inf; nothing was stored")
        meta = json.loads(json.dumps(meta))  # as it will read back
        buf = io.BytesIO()
        np.savez(
            buf,
            __meta__=np.array(json.dumps(meta)),
            __key__=np.array(key),
            __checksum__=np.array(checksum(arrays, meta)),
            **arrays,
        )
        atomic_write_bytes(self.path(key), buf.getvalue())

    def _read(self, key):
        """(arrays, meta) of the part under ``key``; ValueError saying why it cannot be trusted."""
        path = self.path(key)
        if path.is_dir():
            raise ValueError("a folder, not a part file")
        data = path.read_bytes()
        if not data:
            raise ValueError("an empty file")
        if not data.startswith(_ZIP_MAGIC):
            raise ValueError("not a readable part (not a NumPy .npz archive)")
        try:
            with np.load(io.BytesIO(data), allow_pickle=False) as z:
                arrays = {k: z[k] for k in z.files}
            meta = json.loads(str(arrays.pop("__meta__")))
            stored_key = str(arrays.pop("__key__", ""))
            stored_sum = str(arrays.pop("__checksum__", ""))
        except Exception as exc:  # any reading failure means the same: not a part we wrote, whole
            raise ValueError(f"not a readable part ({type(exc).__name__}: {exc})") from None
        if not stored_key:
            raise ValueError("a part that records no task key")
        if stored_key != key:
            raise ValueError(f"the answer of another task (it records key {stored_key})")
        if stored_sum != checksum(arrays, meta):
            raise ValueError("damaged: its arrays do not match their checksum")
        return arrays, meta

    def problem(self, key):
        """Why the part under ``key`` cannot be used, or None if it passes its checks (or is absent)."""
        try:
            self._read(key)
        except FileNotFoundError:
            return None
        except (ValueError, OSError) as exc:
            return str(exc)
        return None

    def verified(self, tasks, label=None):
        """Keys of ``tasks`` whose stored parts pass their checks.

        Every part present but damaged, foreign or unreadable is reported in
        one line (a :class:`DamagedPart` warning: file, what task, frequency,
        why) and left out, so the task is computed again and its part
        replaced.  ``label(task)`` names a task's kind in that line.
        """
        good = set()
        for task in tasks:
            if not self.path(task.key).exists() and not self.path(task.key).is_symlink():
                continue
            why = self.problem(task.key)
            if why is None and self.path(task.key).is_file():
                good.add(task.key)
                continue
            what = label(task) if label is not None else "task"
            warnings.warn(
                f"{self.path(task.key)}: stored {what} at {task.frequency:g} Hz is "
                f"{why or 'unreadable'}; not used, computed again",
                DamagedPart,
                stacklevel=2,
            )
        return good

    def meta(self, key):
        """The metadata stored under ``key``."""
        return self.load(key)[1]

    def load(self, key):
        """(arrays, meta) stored under ``key``, checked.

        Raises
        ------
        BemcheckInputError
            The part is damaged or belongs to another task (it changed after
            the sweep checked it); running the same command again recomputes it.
        """
        try:
            return self._read(key)
        except (ValueError, OSError) as exc:
            raise BemcheckInputError(
                f"{self.path(key)}: stored part is {exc}; run the same command again to compute it anew"
            ) from None


def _read_first_line(path):
    try:
        with open(path) as fh:
            return fh.readline().strip()
    except OSError:
        return None


def boot_id():
    """This boot's identifier (Linux ``/proc/sys/kernel/random/boot_id``), or None where /proc lacks it."""
    return _read_first_line("/proc/sys/kernel/random/boot_id") or None


def _stat_fields(pid):
    """Fields 3 onwards of ``/proc/<pid>/stat``, or None."""
    line = _read_first_line(f"/proc/{int(pid)}/stat")
    if not line:
        return None
    # the command name (field 2) may hold spaces and parentheses: count after its last ')'
    return line.rpartition(")")[2].split()


def process_start(pid):
    """Start time of process ``pid`` in clock ticks after boot, or None if unknown.

    Field 22 of ``/proc/<pid>/stat`` (Linux man-pages, proc(5)): with the
    boot identifier it tells a process apart from a later one given the same
    process id.  None where /proc is missing (macOS, BSD) or the process is
    hidden or gone.
    """
    fields = _stat_fields(pid)
    return fields[19] if fields is not None and len(fields) > 19 else None


def _ended(pid):
    """Whether /proc shows ``pid`` as ended but not yet reaped (state Z or X, proc(5) field 3)."""
    fields = _stat_fields(pid)
    return bool(fields) and fields[0] in ("Z", "X")


@dataclass(frozen=True)
class LockOwner:
    """Who holds a run folder's lock: enough to tell a live holder from a reused process id.

    Attributes
    ----------
    pid : int
        Process id.
    host : str
        Host name (a folder on a shared disk can be locked from another machine).
    started : str or None
        The process's start time in clock ticks after boot (:func:`process_start`).
    boot : str or None
        The boot identifier (:func:`boot_id`).
    command : str
        The bemcheck command holding it ("run", "mesh").
    since : float
        When the lock was taken [s since the epoch].
    """

    pid: int
    host: str = ""
    started: str | None = None
    boot: str | None = None
    command: str = "run"
    since: float = 0.0

    @classmethod
    def me(cls, command):
        """This process as a lock owner."""
        pid = os.getpid()
        return cls(pid, socket.gethostname(), process_start(pid), boot_id(), command, time.time())

    def text(self):
        return json.dumps(
            {
                "pid": self.pid,
                "host": self.host,
                "started": self.started,
                "boot": self.boot,
                "command": self.command,
                "since": self.since,
            }
        )

    @classmethod
    def parse(cls, text):
        """The owner a lock file's text names, or None if it names none."""
        try:
            d = json.loads(text)
            owner = cls(
                int(d["pid"]),
                str(d.get("host") or ""),
                d.get("started"),
                d.get("boot"),
                str(d.get("command") or "run"),
                float(d.get("since") or 0.0),
            )
        except (ValueError, TypeError, KeyError, AttributeError, OverflowError):
            return None
        # a process id is a positive pid_t (POSIX.1-2017 <sys/types.h>: a signed integer, 32 bits on every
        # system bemcheck runs on): anything else was not written by a run
        return owner if 0 < owner.pid <= PID_MAX else None

    def alive(self):
        """Whether the owner may still be running (True whenever that cannot be ruled out)."""
        if not 0 < self.pid <= PID_MAX:
            return False
        if self.host and self.host != socket.gethostname():
            return True  # another machine's processes cannot be seen from here
        if self.boot and boot_id() not in (None, self.boot):
            return False  # the machine has restarted since
        try:
            os.kill(self.pid, 0)
        except ProcessLookupError:
            return False
        except PermissionError:
            pass  # it exists, under another user
        if _ended(self.pid):
            return False  # killed, its parent has not collected it yet: kill(pid, 0) still answers
        if self.started is None:
            return True  # recorded without /proc: the process id is all there is
        now = process_start(self.pid)
        return now is None or now == self.started

    def describe(self):
        """A phrase naming the holder, for messages."""
        what = f"bemcheck {self.command}, process {self.pid}"
        if self.host:
            what += f" on {self.host}"
        if self.since:
            what += time.strftime(" since %Y-%m-%d %H:%M:%S", time.localtime(self.since))
        return what


class RunLock:
    """An exclusive lock on a run folder, so two runs never interleave their writes.

    The lock file names its owner (:class:`LockOwner`: process id, host,
    process start time and boot identifier where /proc has them).  A lock
    whose owner is gone (a run killed with SIGKILL, a machine restarted, the
    process id since given to another program) is taken over; one held from
    another host is always respected.  Whoever takes the lock removes the
    temporaries (``.*.part``) of writes such a run cut short: no other run
    can be writing them.  Releasing the lock removes its own, which an
    interrupt can leave behind.

    Parameters
    ----------
    folder : str or Path
        The run (or mesh) folder.
    command : str
        The bemcheck command taking it, named to whoever is refused.
    """

    def __init__(self, folder, command="run"):
        self.path = Path(folder) / LOCK
        self.command = command
        self.held = False
        self._text = None

    def __enter__(self):
        for _ in range(3):
            me = LockOwner.me(self.command).text()
            try:
                fd = os.open(self.path, os.O_CREAT | os.O_EXCL | os.O_WRONLY)
            except FileExistsError:
                if self.path.is_dir() and not self.path.is_symlink():
                    raise BemcheckInputError(
                        f"{self.path}: a folder where bemcheck keeps its lock file; expected a file or nothing "
                        "there: remove the folder (bemcheck never makes one) and run again"
                    ) from None
                seen = _read_whole(self.path)
                if seen is None:
                    continue  # released between our two looks
                if not self._live(seen):
                    self._take_over(seen)
                    continue
                owner = LockOwner.parse(seen or "")
                holder = f": {owner.describe()}" if owner is not None else ""
                raise BemcheckInputError(
                    f"{self.path.parent}: another bemcheck run is writing into this folder "
                    f"(lock file {self.path.name}{holder}); wait for it or choose another --out. "
                    f"If no such run is going on, delete {self.path}"
                ) from None
            with os.fdopen(fd, "w") as fh:
                fh.write(me)
            self._text = me
            self.held = True
            self._remove_temporaries()
            return self
        raise BemcheckInputError(f"{self.path}: cannot take the run folder's lock")

    def _live(self, text):
        owner = LockOwner.parse(text)
        if owner is not None:
            return owner.alive()
        # nothing readable: a holder may be between creating the file and writing it
        try:
            return time.time() - self.path.stat().st_mtime < LOCK_GRACE_S
        except FileNotFoundError:
            return False

    def _take_over(self, seen):
        """Remove a stale lock, unless another run replaced it since it was read."""
        grab = self.path.with_name(f"{self.path.name}.stale-{os.getpid()}")
        try:
            os.replace(self.path, grab)
        except FileNotFoundError:
            return  # another run removed it first
        try:
            if _read_whole(grab) != seen:
                # a run took the lock over between our read and our rename: put its lock back
                try:
                    os.link(grab, self.path)
                except FileExistsError:
                    pass
        finally:
            grab.unlink(missing_ok=True)

    def _remove_temporaries(self):
        for folder in (self.path.parent, self.path.parent / PARTS):
            for tmp in folder.glob(".*.part"):
                tmp.unlink(missing_ok=True)

    def __exit__(self, *exc):
        if self.held:
            # Ctrl-C can land inside tempfile.mkstemp, after the file exists and
            # before its name is known to the writer's cleanup; the holder of
            # the lock is the only writer, so its temporaries can go here.
            self._remove_temporaries()
            if _read_whole(self.path) == self._text:  # never another run's lock
                self.path.unlink(missing_ok=True)
            self.held = False


def _read_whole(path):
    try:
        return Path(path).read_text()
    except FileNotFoundError:
        return None
    except (OSError, UnicodeDecodeError):
        return ""
