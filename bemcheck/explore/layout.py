"""The chosen layout as a case file that ``bemcheck run`` verifies in full.

The case's own text is parsed, its controls that the exploration did not fix
are replaced by the chosen free-standing points, its ``[explore]`` table is
left out, its ``[control]`` table becomes ``objective = "power"`` (the
objective the exploration chose the layout for, so ``bemcheck run`` verifies
the same strengths; ``POWER_NOTE`` says so in the file), each ``[[amplifier]]``
keeps only the fixed controls it fed (one left feeding none is left out: the
chosen controls are new loudspeakers, wired to no channel yet), mesh-file paths
are made absolute (the new file lives in the output folder), and the result is written back as TOML and read again with
the case loader before it is returned, so a written layout always loads.
"""

import math
import tomllib
from pathlib import Path

from bemcheck.case.load import parse_case

POWER_NOTE = (
    '# [control] objective is "power": explore chose these controls for minimum radiated power, '
    "whatever the case's objective.\n"
)


def amplifier_note(case):
    """Comment lines naming the amplifiers the layout leaves out (they fed only replaced controls); "" if none.

    Examples
    --------
    >>> from types import SimpleNamespace as N
    >>> from bemcheck.case.amplifiers import Amplifier
    >>> case = N(explore=N(fixed=("c2",)), amplifiers=(Amplifier("a", 20.0, 5.0, ("c1",)),))
    >>> amplifier_note(case).startswith("# [[amplifier]] 'a' is left out")
    True
    """
    fixed = set(case.explore.fixed) if case.explore else set()
    gone = [a.name for a in case.amplifiers if not fixed.intersection(a.controls)]
    return "".join(
        f"# [[amplifier]] '{name}' is left out: it fed only controls explore replaced; "
        "name the chosen controls in an amplifier's controls to check its channels.\n"
        for name in gone
    )


def layout_text(case, positions, names):
    """TOML text of ``case`` with its non-fixed controls replaced by points at ``positions``.

    Parameters
    ----------
    case : Case
        With an ``[explore]`` table; ``case.text`` is its file's text.
    positions : (K, 3) array_like
        Chosen control positions [m].
    names : sequence of str
        Their source names (not used by the case's other sources).

    Returns
    -------
    str

    Examples
    --------
    >>> from bemcheck.case import parse_case
    >>> text = "\\n".join(['[case]', 'title = "t"', '[frequencies]', 'list = [100.0]', '[[source]]', 'name = "p"',
    ...                   'role = "primary"', 'at = [0.0, 0.0, 0.0]', 'strength = 1e-3', '[explore]', 'points = [[0.1, 0, 0]]'])
    >>> new = parse_case(layout_text(parse_case(text), [[0.1, 0.0, 0.0]], ["c1"]))
    >>> [(s.name, s.role, s.position) for s in new.sources][1], new.explore, new.control.KIND
    (('c1', 'control', (0.1, 0.0, 0.0)), None, 'power')
    """
    doc = tomllib.loads(case.text)
    doc.pop("explore", None)
    doc["control"] = {"objective": "power"}
    fixed = set(case.explore.fixed) if case.explore else set()
    doc["source"] = [s for s in doc["source"] if s.get("role") != "control" or s.get("name") in fixed]
    doc["source"] += [{"name": n, "role": "control", "at": [float(v) for v in x]} for n, x in zip(names, positions)]
    _rewire_amplifiers(doc, {s["name"] for s in doc["source"]})
    base = Path(case.path).parent if case.path else Path(".")
    for body in doc.get("body", []):
        if body.get("kind") == "file" and "path" in body:
            body["path"] = str((base / body["path"]).resolve())
    text = dumps(doc)
    parse_case(text)
    return text


def _rewire_amplifiers(doc, kept):
    """Each amplifier feeds only the sources ``kept``; one left feeding none goes."""
    amplifiers = []
    for amp in doc.pop("amplifier", []):
        fed = [c for c in amp.get("controls", []) if c in kept]
        if fed:
            amplifiers.append({**amp, "controls": fed})
    if amplifiers:
        doc["amplifier"] = amplifiers


def dumps(doc):
    """TOML text of a parsed document (tables, arrays of tables, inline tables in arrays, scalars).

    Examples
    --------
    >>> print(dumps({"a": 1, "t": {"b": [1.5, "x"]}, "s": [{"n": "u"}]}).strip())
    a = 1
    <BLANKLINE>
    [t]
    b = [1.5, "x"]
    <BLANKLINE>
    [[s]]
    n = "u"
    """
    lines = [f"{k} = {_value(v)}" for k, v in doc.items() if not _is_table(v) and not _is_table_array(v)]
    for key, value in doc.items():
        if _is_table(value):
            lines += _table(value, key, f"[{key}]")
        elif _is_table_array(value):
            for item in value:
                lines += _table(item, key, f"[[{key}]]")
    return "\n".join(lines) + "\n"


def _table(table, path, header):
    out = ["", header] + [f"{k} = {_value(v)}" for k, v in table.items() if not _is_table(v)]
    for k, v in table.items():
        if _is_table(v):
            out += _table(v, f"{path}.{k}", f"[{path}.{k}]")
    return out


def _is_table(v):
    return isinstance(v, dict)


def _is_table_array(v):
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def _value(v):
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return repr(v) if math.isfinite(v) else ("nan" if math.isnan(v) else ("inf" if v > 0 else "-inf"))
    if isinstance(v, str):
        return '"' + v.replace("\\", "\\\\").replace('"', '\\"').replace("\n", "\\n") + '"'
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{k} = {_value(x)}" for k, x in v.items()) + " }"
    if isinstance(v, list):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    raise TypeError(f"cannot write {type(v).__name__} as TOML")
