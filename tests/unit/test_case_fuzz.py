"""Fuzzing the case loader: anything at all gives a valid Case or a CaseError, nothing else."""

import copy
import tomllib

import tomli_w
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import bemcheck
from bemcheck.case import parse_case

DEMO = tomllib.loads(bemcheck.example_path("demo").read_text())

scalars = st.one_of(
    st.none(),
    st.booleans(),
    st.integers(-(10**6), 10**6),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=12),
)
values = st.recursive(
    scalars,
    lambda inner: st.one_of(
        st.lists(inner, max_size=4), st.dictionaries(st.text(min_size=1, max_size=8), inner, max_size=4)
    ),
    max_leaves=12,
)


def _toml(doc):
    def clean(v):
        if isinstance(v, dict):
            return {k: clean(x) for k, x in v.items() if x is not None}
        if isinstance(v, list):
            return [clean(x) for x in v if x is not None]
        return v

    return tomli_w.dumps(clean(doc))


def _paths(doc, prefix=()):
    if isinstance(doc, dict):
        for k, v in doc.items():
            yield prefix + (k,)
            yield from _paths(v, prefix + (k,))
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            yield prefix + (i,)
            yield from _paths(v, prefix + (i,))


PATHS = list(_paths(DEMO))


def _outcome(text):
    try:
        case = parse_case(text)
    except bemcheck.CaseError as exc:
        assert str(exc).startswith("<case>")
        return "error"
    assert isinstance(case, bemcheck.Case)
    return "case"


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.text(max_size=200))
def test_random_text(text):
    _outcome(text)


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.dictionaries(st.text(min_size=1, max_size=10), values, max_size=6))
def test_random_documents(doc):
    try:
        text = _toml(doc)
    except (TypeError, ValueError):
        return
    _outcome(text)


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from(PATHS), values, st.booleans())
def test_perturbed_demo(path, value, delete):
    doc = copy.deepcopy(DEMO)
    parent = doc
    for key in path[:-1]:
        parent = parent[key]
    if delete:
        del parent[path[-1]]
    else:
        parent[path[-1]] = value
    try:
        text = _toml(doc)
    except (TypeError, ValueError):
        return
    _outcome(text)
