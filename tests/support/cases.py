"""Small case files for tests, built from named pieces (all invented test cases).

``case_text`` writes the same TOML a test would have spelled out, so tests
may still edit the text with ``str.replace``.
"""


def source(name, role, at, strength=None):
    """A ``[[source]]`` table: a point source at ``at`` [m], with its strength [m³/s] if given.

    Examples
    --------
    >>> print(source("p", "primary", [0.3, 0.0, 0.0], 1e-3), end="")
    [[source]]
    name = "p"
    role = "primary"
    at = [0.3, 0.0, 0.0]
    strength = 0.001
    """
    text = f'[[source]]\nname = "{name}"\nrole = "{role}"\nat = {[float(c) for c in at]}\n'
    return text + ("" if strength is None else f"strength = {strength!r}\n")


def source_pair(primary_at, control_at):
    """A primary "p" of strength 1e-3 m³/s at ``primary_at`` and a control "c" at ``control_at`` [m]."""
    return source("p", "primary", primary_at) + "strength = 1e-3\n" + source("c", "control", control_at)


SOURCE_PAIR = source_pair([0.3, 0.0, 0.0], [-0.3, 0.0, 0.0])
BOX_BODY = """[[body]]
name = "cab"
kind = "box"
size = [0.2, 0.2, 0.2]
"""
CIRCLE_30 = """[observers]
far_field = { plane = "xy", step_deg = 30.0 }
"""
CIRCLE_5 = CIRCLE_30.replace("30.0", "5.0")
SIXTH_OCTAVES_100_1600 = "start = 100.0\nstop = 1600.0\nper_octave = 6"


def case_text(title, frequencies, *, mesh="", bodies="", sources=SOURCE_PAIR, observers=CIRCLE_30):
    """TOML of a small case.

    Parameters
    ----------
    title : str
    frequencies : str
        The lines of its ``[frequencies]`` table.
    mesh : str
        The lines of its ``[mesh]`` table; empty: no table.
    bodies, sources, observers : str
        Whole tables, e.g. :data:`BOX_BODY`, :data:`SOURCE_PAIR`, :data:`CIRCLE_30`.

    Examples
    --------
    >>> import tomllib
    >>> doc = tomllib.loads(case_text("t", "list = [100.0]", bodies=BOX_BODY))
    >>> doc["body"][0]["kind"], [s["role"] for s in doc["source"]]
    ('box', ['primary', 'control'])
    """
    mesh_table = f"[mesh]\n{mesh}\n" if mesh else ""
    return f'\n[case]\ntitle = "{title}"\n[frequencies]\n{frequencies}\n{mesh_table}{bodies}{sources}{observers}'


# No bodies: the BEM path answers the free field without a solver compile.
FREE_CASE = case_text(
    "Disk-full row (invented test case, no bodies)",
    "start = 100.0\nstop = 800.0\nper_octave = 3",
    mesh="band_octaves = 4",
)
