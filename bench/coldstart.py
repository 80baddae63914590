"""Cold start: launch ``bemcheck run`` as a user would and time it to its first finished frequency.

The run's progress lines on stderr (``[1/N] solve ...``) mark the moment;
the run is stopped there.  "Cold" is a first run on this machine state: an
empty mesh cache and an empty numba cache directory.  "Warm" reruns with
both caches filled.  Neither can keep bempp-cl's assembly kernels: they are
compiled by numba in every new process (only a few helpers are cached on
disk), so warm caches save gmsh and a little JIT, not the bulk of the start.
"""

import os
import re
import subprocess
import tempfile
import time
from pathlib import Path

_FIRST = re.compile(r"^\[1/(\d+)\] solve .*?(\d+(?:\.\d+)?) s ETA")


def first_frequency(bemcheck, case, mesh_cache, numba_cache, timeout=1800.0):
    """Seconds from launching ``bemcheck run`` to its first progress line of a solve.

    Parameters
    ----------
    bemcheck : path
        The ``bemcheck`` console script.
    case : path
        Case file.
    mesh_cache, numba_cache : path
        Folders for the mesh cache and for ``NUMBA_CACHE_DIR``.
    timeout : float
        Give up after this many seconds [s].

    Returns
    -------
    dict
        ``seconds`` to the first solve's line, ``task_seconds`` the run's own
        time for that task (meshing, compiling and solving), ``tasks`` the
        number of tasks planned, ``load`` the 1-minute load average then.

    Raises
    ------
    RuntimeError
        The run ended or timed out before its first solve.
    """
    env = dict(os.environ, NUMBA_CACHE_DIR=str(numba_cache))
    with tempfile.TemporaryDirectory(prefix="bemcheck-coldstart-") as out:
        args = [str(bemcheck), "run", str(case), "--out", out, "--mesh-cache", str(mesh_cache), "--no-report"]
        start = time.perf_counter()
        proc = subprocess.Popen(args, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True, env=env)
        seen = []
        try:
            for line in proc.stderr:
                match = _FIRST.match(line.strip())
                if match:
                    return {
                        "seconds": time.perf_counter() - start,
                        "task_seconds": float(match.group(2)),
                        "tasks": int(match.group(1)),
                        "load": os.getloadavg()[0],
                    }
                seen.append(line)
                if time.perf_counter() - start > timeout:
                    break
            raise RuntimeError(
                f"{case}: `bemcheck run` gave no solve line; its stderr ended with:\n{''.join(seen[-20:])}"
            )
        finally:
            proc.kill()
            proc.wait()


def cold_and_warm(bemcheck, case, workdir):
    """First-frequency times of a cold run and of a warm rerun, with fresh caches under ``workdir``.

    Returns
    -------
    dict
        ``cold`` and ``warm``, each as :func:`first_frequency` returns.
    """
    mesh_cache, numba_cache = Path(workdir) / "mesh-cache", Path(workdir) / "numba-cache"
    cold = first_frequency(bemcheck, case, mesh_cache, numba_cache)
    warm = first_frequency(bemcheck, case, mesh_cache, numba_cache)
    return {"cold": cold, "warm": warm, "numba_cache_files": sum(1 for _ in numba_cache.rglob("*") if _.is_file())}
