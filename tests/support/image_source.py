"""An exact scattered world without BEM: monopoles above an infinite rigid plane z = 0.

Method of images (Kinsler, Frey, Coppens & Sanders, Fundamentals of Acoustics,
4th ed., 2000, sec. 7.7 (from memory); Morse & Ingard, Theoretical Acoustics,
1968, sec. 7.4): the field of a source at (x, y, z) above a rigid plane is the
free field of the source plus that of its mirror image at (x, y, −z), in
z ≥ 0, and zero below the plane.
"""

import numpy as np

from bemcheck.solvers import freefield
from bemcheck.solvers.response import FieldResponse


def mirror(x):
    x = np.array(x, dtype=float, copy=True)
    x[..., 2] *= -1.0
    return x


def image_response(frequency, medium, sources, directions, points):
    """FieldResponse of monopoles at ``sources`` (all z > 0) above a rigid plane z = 0."""
    x = np.atleast_2d(np.asarray(sources, dtype=float))
    d = np.asarray(directions, dtype=float)
    pts = np.asarray(points, dtype=float).reshape(-1, 3)
    upper = (d[:, 2] >= 0.0)[:, None]
    far = (
        freefield.far_field_matrix(frequency, medium, x, d)
        + freefield.far_field_matrix(frequency, medium, mirror(x), d)
    ) * upper
    z = freefield.impedance_matrix(frequency, medium, x) + freefield.transfer_matrix(frequency, medium, mirror(x), x)
    p = (
        freefield.transfer_matrix(frequency, medium, x, pts)
        + freefield.transfer_matrix(frequency, medium, mirror(x), pts)
        if len(pts)
        else np.zeros((0, len(x)), complex)
    )
    power = (z + z.conj().T) / 4.0
    return FieldResponse(float(frequency), far, p, z, power)


def image_task(case, task, calls=None):
    """A sweep task answered by the image-source world instead of the BEM.

    The 'mesh' of a task only perturbs the answer by a known relative amount,
    (element_size)², so an error check (a case with bodies) sees a finite
    numerical error.
    """
    from bemcheck.observers import for_observers

    if calls is not None:
        calls.append(task.frequency)
    d = for_observers(case.observers.far_field)
    x = np.array([s.position for s in case.sources])
    pts = np.array([p.at for p in case.observers.points]).reshape(-1, 3)
    r = image_response(task.frequency, case.medium, x, d.unit, pts)
    check = task.kind == "check"
    h = task.element_size * (1.5 if check else 1.0)
    scale = 1.0 + h**2
    arrays = {
        "far_field": r.far_field * scale,
        "points": r.points * scale,
        "impedance": r.impedance,
        "power_matrix": r.power_matrix,
    }
    if check:
        arrays["size_ratio"] = np.array(1.5)
    lam = case.medium.speed_of_sound / task.frequency
    return arrays, {
        "elements": 100,
        "elements_per_wavelength": lam / task.element_size,
        "device": "image-source",
        "seconds": 0.0,
    }


def slow_image_task(case, task, delay=0.3):
    """:func:`image_task` that takes ``delay`` seconds, so a worker can be killed mid-sweep."""
    import time

    time.sleep(delay)
    return image_task(case, task)
