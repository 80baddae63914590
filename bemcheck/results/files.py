"""The results file: one xarray Dataset in NetCDF (h5netcdf), plus summary.json.

Complex variables are stored as ``<name>_re`` / ``<name>_im`` pairs so any
NetCDF reader opens the file (each part with the variable's units and its
long name marked as the real or imaginary part); :func:`load_results` joins
them again.  Every variable is held to its schema
(:mod:`bemcheck.results.schema`) before it is written.  Every
write goes to a temporary name in the same folder and is renamed into place,
so a reader never sees a half-written file, and refuses NaN or inf.
"""

import json
import os
import tempfile
from pathlib import Path

import numpy as np
import xarray as xr

from bemcheck.errors import BemcheckInputError
from bemcheck.results.cf import annotate

RESULTS_FILE = "results.nc"
SUMMARY_FILE = "summary.json"
_COMPLEX_FLAG = "bemcheck_complex_part"
_PART_NAMES = {"re": "real part", "im": "imaginary part"}


class NonFiniteResult(RuntimeError):
    """A result held NaN or inf; nothing was written."""


def _split_complex(ds):
    out = xr.Dataset(coords=ds.coords, attrs=ds.attrs)
    for name, var in ds.data_vars.items():
        if np.iscomplexobj(var.values):
            for part, values in (("re", var.values.real), ("im", var.values.imag)):
                attrs = {**var.attrs, _COMPLEX_FLAG: part}
                if "long_name" in attrs:
                    attrs["long_name"] = f"{_PART_NAMES[part]} of: {attrs['long_name']}"
                out[f"{name}_{part}"] = (var.dims, values, attrs)
        else:
            out[name] = var
    return out


def _join_complex(ds):
    out = xr.Dataset(coords=ds.coords, attrs=ds.attrs)
    for name, var in ds.data_vars.items():
        part = var.attrs.get(_COMPLEX_FLAG)
        if part == "im":
            continue
        if part == "re":
            base = name[: -len("_re")]
            attrs = {k: v for k, v in var.attrs.items() if k != _COMPLEX_FLAG}
            if "long_name" in attrs:
                attrs["long_name"] = attrs["long_name"].removeprefix(f"{_PART_NAMES['re']} of: ")
            out[base] = (var.dims, var.values + 1j * ds[f"{base}_im"].values, attrs)
        else:
            out[name] = var
    return out


def check_finite(ds):
    """Raise NonFiniteResult naming the first variable holding NaN or inf."""
    for name, var in ds.data_vars.items():
        if np.issubdtype(var.dtype, np.number) and not np.all(np.isfinite(var.values)):
            raise NonFiniteResult(f"result variable '{name}' holds NaN or inf; nothing was written")


def _naming(exc, path):
    """An OSError with ``exc``'s errno that names ``path`` with the system's short text.

    fsync reports a full disk with no file name, so the user would not learn
    which file could not be written.
    """
    return OSError(exc.errno, os.strerror(exc.errno), str(path))


def _umask():
    """The process's file-mode creation mask, read without changing it where Linux shows it."""
    try:
        with open("/proc/self/status") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)  # elsewhere: set and restore at once
    os.umask(mask)
    return mask


def file_mode():
    """The mode a plain ``open(path, "w")`` would give a new file: 0666 less the umask (0644 for umask 022).

    Examples
    --------
    >>> file_mode() == 0o666 & ~_umask()
    True
    """
    return 0o666 & ~_umask()


def atomic_write_bytes(path, data):
    """Write ``data`` (bytes-like) to ``path`` through a flushed temporary file and a rename.

    The file gets the mode any program's new file gets (:func:`file_mode`),
    not the owner-only mode of a temporary file, so colleagues can open it.
    On failure the temporary is removed and an OSError names ``path``.
    """
    path = Path(path)
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    except OSError as exc:
        raise _naming(exc, path) from exc
    try:
        with os.fdopen(fd, "wb") as fh:
            os.fchmod(fh.fileno(), file_mode())
            fh.write(data)
            fh.flush()
            # a full disk may show only when delayed blocks are flushed: fail before the rename
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException as exc:
        Path(tmp).unlink(missing_ok=True)
        if isinstance(exc, OSError) and exc.errno is not None:
            raise _naming(exc, path) from exc
        raise


def write_dataset(ds, path, schema):
    """Write ``ds`` to NetCDF at ``path`` atomically, its attributes from ``schema``, complex parts split.

    Parameters
    ----------
    ds : xarray.Dataset
    path : str or Path
        Target file; its folder must exist.
    schema : Schema
        The file's declarations (:data:`bemcheck.results.schema.RESULTS` or
        ``EXPLORE``); a variable it does not declare raises
        :class:`~bemcheck.results.cf.SchemaError` and nothing is written.
    """
    ds = annotate(ds, schema)
    check_finite(ds)
    # Built in memory, written as plain bytes: when a disk fills during an
    # HDF5 file write, h5py cannot close the file, prints tracebacks as it is
    # collected and the process dies with a segmentation fault (seen here).
    split = _split_complex(ds)
    # results hold finite numbers only (check_finite), so no fill value is declared
    encoding = {name: {"_FillValue": None} for name in split.variables}
    atomic_write_bytes(path, split.to_netcdf(engine="h5netcdf", encoding=encoding))


def read_dataset(path):
    """Read a file written by :func:`write_dataset`, complex variables joined."""
    with xr.open_dataset(path, engine="h5netcdf") as ds:
        return _join_complex(ds.load())


def write_summary(summary, path):
    """Write the summary dict as JSON, atomically."""
    atomic_write_bytes(path, (json.dumps(summary, indent=2, sort_keys=False, allow_nan=False) + "\n").encode())


def load_results(folder):
    """Open a finished run's results.

    Parameters
    ----------
    folder : str or Path
        The run folder given to ``bemcheck run --out``.

    Returns
    -------
    xarray.Dataset
        Complex variables (``p_free``, ``p_bem``, ...) as complex arrays.

    Examples
    --------
    >>> import bemcheck, tempfile
    >>> out = tempfile.mkdtemp()
    >>> _ = bemcheck.run_case(bemcheck.load_case(bemcheck.example_path("free-pair")), out, model="free")
    >>> ds = bemcheck.load_results(out)
    >>> ds["p_free"].dtype.kind
    'c'
    """
    path = Path(folder) / RESULTS_FILE
    if not path.is_file():
        raise BemcheckInputError(f"{path}: no results file here; expected the folder of a finished `bemcheck run`")
    try:
        return read_dataset(path)
    except Exception as exc:  # h5py, netCDF and xarray each fail in their own way on a damaged file
        why = str(exc).splitlines()[0][:200] if str(exc) else type(exc).__name__
        raise BemcheckInputError(
            f"{path}: cannot be read as a results file ({why}); expected the results.nc "
            "a finished `bemcheck run` writes: run it again into this folder"
        ) from None
