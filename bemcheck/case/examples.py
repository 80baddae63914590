"""The example case files shipped with bemcheck (the top-level cases/ folder)."""

from importlib.resources import files
from pathlib import Path


def example_names():
    """Names of the shipped example cases, sorted.

    Examples
    --------
    >>> "free-pair" in example_names()
    True
    """
    return sorted(p.name[: -len(".toml")] for p in files("bemcheck.examples").iterdir() if p.name.endswith(".toml"))


def example_path(name):
    """Path of the shipped example case ``name`` (without ``.toml``).

    Examples
    --------
    >>> example_path("free-pair").name
    'free-pair.toml'
    """
    path = Path(str(files("bemcheck.examples") / f"{name}.toml"))
    if not path.is_file():
        raise KeyError(f"no example case '{name}'; examples: {', '.join(example_names())}")
    return path
