"""Memory: what the machine can give, and what the dense BEM matrices of N unknowns take.

A floor below every package, so that the case reader and the mesher can refuse a
job that would not fit before the solver is ever imported.
"""

# N x N complex arrays held at the peak of a solve: the matrix and the
# transposed pair blocks during assembly (the LU works in place); measured
# 2.1 in bench/.
DENSE_ARRAYS = 2

COMPLEX_BYTES = 16


def available_memory():
    """Memory the system could give this process now [bytes], or None where unknown.

    Linux's MemAvailable (free memory plus what the page cache can yield).

    Examples
    --------
    >>> available = available_memory()
    >>> available is None or available > 0
    True
    """
    try:
        with open("/proc/meminfo") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except (OSError, ValueError, IndexError):
        return None
    return None


def dense_bytes(n_unknowns, block_unknowns=()):
    """Peak bytes of the dense BEM matrices of one solve [bytes].

    Parameters
    ----------
    n_unknowns : int
        Unknowns N of the whole scene.
    block_unknowns : sequence of int
        Unknowns of the bodies also solved alone: one more dense block each.

    Examples
    --------
    >>> dense_bytes(1_000)
    32000000.0
    >>> dense_bytes(1_000, block_unknowns=(500,))
    36000000.0
    """
    blocks = sum(float(n) ** 2 for n in block_unknowns)
    return COMPLEX_BYTES * (DENSE_ARRAYS * float(n_unknowns) ** 2 + blocks)
