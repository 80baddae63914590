"""What the figures draw, taken from a results Dataset: which models ran, fields per signal, in-plane directions."""

from pathlib import Path

import numpy as np

from bemcheck.case import parse_case
from bemcheck.compare import CONTROLLED
from bemcheck.compare.departures import designed_strengths
from bemcheck.errors import BemcheckInputError
from bemcheck.observers import SPHERE, plane_labels, planes_of
from bemcheck.solvers.control.strengths import primary_strengths


def has_bem(ds):
    """Whether the run holds the BEM model (else it is a free-field run)."""
    return "p_bem" in ds.data_vars


def has_controls(ds):
    """Whether the layout has control sources."""
    return bool((ds["role"].values == "control").any())


def case_of(ds):
    """The run's case, re-read from the text stored in the results.

    Returns
    -------
    (Case or None, str)
        The case, or None and the reason it could not be read (the report
        then leaves out what needs it and says why).
    """
    text = ds.attrs.get("case_text", "")
    if not text:
        return None, "the results hold no case text"
    try:
        return parse_case(text, Path(ds.attrs.get("case_file", "<case>"))), ""
    except BemcheckInputError as exc:
        return None, f"the stored case text could not be read again ({exc})"


def figure_planes(ds):
    """The far-field planes a run's figures are drawn for, in the case's order ((None,) for results without labels).

    Examples
    --------
    >>> import xarray as xr
    >>> figure_planes(xr.Dataset(coords={"plane": ("direction", ["xz", "xz", "sphere"])}))
    ('xz', 'sphere')
    """
    labels = planes_of(ds)
    return (None,) if labels is None else plane_labels(labels)


def plane_directions(ds, plane=None):
    """Far-field directions in the plane labelled ``plane`` (None: the first), by increasing azimuth.

    On a circle that is every direction of the plane; on a Lebedev sphere it
    is the rule's equatorial points in its frame (28 of the 590 of degree 41).

    Parameters
    ----------
    ds : xarray.Dataset
        Results with coords ``azimuth_deg``, ``elevation_deg`` and ``plane`` on ``direction``.
    plane : str, optional
        A plane label of ``ds["plane"]``.

    Returns
    -------
    (M,) ndarray of int
        Direction indices; empty when no direction lies in the plane.
    """
    az = ds["azimuth_deg"].values % 360.0
    idx = np.nonzero(np.abs(ds["elevation_deg"].values) < 1e-6)[0]
    labels = planes_of(ds)
    if labels is not None:
        label = plane if plane is not None else (plane_labels(labels) or (None,))[0]
        idx = idx[np.asarray(labels)[idx] == label]
    return idx[np.argsort(az[idx], kind="stable")]


def plane_words(plane):
    """How a figure names its plane: "plane xz", "the sphere's equator", or "the observers' plane" (no label)."""
    if plane is None:
        return "the observers' plane"
    return "the sphere's equator" if plane == SPHERE else f"plane {plane}"


def signal_label(signal):
    """How a signal is named in titles."""
    return "controlled system (free-field design)" if signal == CONTROLLED else f"source '{signal}' alone"


def signal_fields(ds, signal, primary_q=None):
    """Far-field pressures of one signal in each model that ran.

    Parameters
    ----------
    ds : xarray.Dataset
        Results (free-field run or both models).
    signal : str
        A source name or ``"controlled"``.
    primary_q : (Np,) array_like, optional
        Primary strengths [m^3/s]; needed for ``"controlled"``.

    Returns
    -------
    dict[str, (F, D) ndarray of complex]
        Curve label -> far-field pressure at 1 m [Pa per unit strength for
        a single source, Pa for the controlled system].  Keys: for a source,
        ``"free field"`` and (BEM runs) ``"scattered"``; for the controlled
        system, ``"free field"``, and either ``"scattered, as designed"``,
        ``"scattered, re-optimised"`` and ``"primaries alone, scattered"``
        (BEM runs) or ``"primaries alone"`` (free-field runs).
    """
    if signal != CONTROLLED:
        s = list(ds["source"].values).index(signal)
        out = {"free field": ds["p_free"].values[:, s, :]}
        if has_bem(ds):
            out["scattered"] = ds["p_bem"].values[:, s, :]
        return out
    if primary_q is None:
        raise ValueError("primary_q: the primary strengths are needed for the controlled field")
    q = designed_strengths(ds, primary_q)
    free = np.einsum("fsd,fs->fd", ds["p_free"].values, q)
    if not has_bem(ds):
        alone = q * (ds["role"].values == "primary")
        return {"free field": free, "primaries alone": np.einsum("fsd,fs->fd", ds["p_free"].values, alone)}
    q_re = ds["q_control_bem"].values.copy()
    q_re[:, ds["role"].values == "primary"] = primary_q
    alone = q * (ds["role"].values == "primary")
    return {
        "free field": free,
        "scattered, as designed": np.einsum("fsd,fs->fd", ds["p_bem"].values, q),
        "scattered, re-optimised": np.einsum("fsd,fs->fd", ds["p_bem"].values, q_re),
        "primaries alone, scattered": np.einsum("fsd,fs->fd", ds["p_bem"].values, alone),
    }


def primary_q_of(case):
    """Primary strengths of ``case`` or None."""
    return None if case is None else primary_strengths(case)


def default_signal(ds):
    """The signal a single-signal figure shows: the controlled system if there are controls, else the first primary."""
    if has_controls(ds):
        return CONTROLLED
    roles = ds["role"].values
    return str(ds["source"].values[np.nonzero(roles == "primary")[0][0]])


def trust_limit_hz(ds, signal):
    """Lowest trust limit found for ``signal`` over the sectors [Hz], or None."""
    if "trust_limit_hz" not in ds.data_vars or signal not in ds["signal"].values:
        return None
    found = ds["trust_limit_found"].sel(signal=signal).values
    return float(ds["trust_limit_hz"].sel(signal=signal).values[found].min()) if found.any() else None


def polar_frequencies(ds, signal, count=4):
    """A few frequencies spread over the band in log f, one of them nearest the trust limit.

    Returns
    -------
    list of float
        Solved frequencies [Hz], increasing, at most ``count``.

    Examples
    --------
    >>> import xarray as xr
    >>> ds = xr.Dataset(coords={"frequency": [100.0, 200.0, 400.0, 800.0, 1600.0]})
    >>> polar_frequencies(ds, "controlled")
    [100.0, 200.0, 800.0, 1600.0]
    """
    f = ds["frequency"].values
    wanted = list(np.exp(np.linspace(np.log(f[0]), np.log(f[-1]), count)))
    limit = trust_limit_hz(ds, signal)
    if limit is not None:
        wanted[int(np.argmin(np.abs(np.log(np.array(wanted) / limit))))] = limit
    picked = {int(np.argmin(np.abs(np.log(f / w)))) for w in wanted}
    return [float(f[i]) for i in sorted(picked)]
