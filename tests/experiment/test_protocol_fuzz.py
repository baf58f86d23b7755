"""Mutated demo protocols, non-finite numbers included, go through parse → compile → audit and either pass or
raise the project's one error type with a JSON path: never another exception.

Examples per run: ``STIMLAB_FUZZ_EXAMPLES`` (default 200; set it to a few thousand for a deep run, see
DEVELOPERS.md).
"""

import json
import math
import os
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stimlab.audit.preflight import audit_protocol
from stimlab.errors import InputError
from stimlab.experiment.compile import compile_protocol
from stimlab.experiment.protocol import parse_protocol

PROTOCOLS = Path(__file__).parents[2] / "protocols"
DEMOS = {p.stem: p.read_text() for p in sorted(PROTOCOLS.glob("*.json"))}
EXAMPLES = int(os.environ.get("STIMLAB_FUZZ_EXAMPLES", "200"))

ODD_VALUES = st.sampled_from([
    math.nan, math.inf, -math.inf, 1e308, -1e308, 1e-320, 0, -1, 0.0, 2**63, -(2**70), 10**30, "", "x" * 300,
    "\u00e9", [], {}, None, True, False, [[[[]]]], [0, 0, 0], [1e9, -1e9, 0], {"a": 1},
]) | st.floats(allow_nan=True, allow_infinity=True) | st.integers(-(10**6), 10**6) | st.text(max_size=20)


def _paths(value, path=()):
    yield path
    if isinstance(value, dict):
        for key, item in value.items():
            yield from _paths(item, path + (key,))
    elif isinstance(value, list):
        for i, item in enumerate(value):
            yield from _paths(item, path + (i,))


def _set(document, path, value):
    if not path:
        return value
    target = document
    for part in path[:-1]:
        target = target[part]
    target[path[-1]] = value
    return document


@st.composite
def mutated(draw):
    name = draw(st.sampled_from(sorted(DEMOS)))
    document = json.loads(DEMOS[name])
    for _ in range(draw(st.integers(1, 3))):
        paths = list(_paths(document))
        path = draw(st.sampled_from(paths))
        if draw(st.booleans()) and path and isinstance(path[-1], str):
            parent = _set(document, (), document)
            for part in path[:-1]:
                parent = parent[part]
            del parent[path[-1]]  # a field left out
        else:
            document = _set(document, path, draw(ODD_VALUES))
    return name, json.dumps(document, allow_nan=True)  # NaN and Infinity as Python writes them


@pytest.fixture(scope="module")
def profile():
    from stimlab.profiles.demo import demo_profile

    return demo_profile()


@settings(max_examples=EXAMPLES, deadline=None, derandomize=not os.environ.get("STIMLAB_FUZZ_EXAMPLES"),
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large, HealthCheck.function_scoped_fixture])
@given(case=mutated())
def test_parse_compile_audit_raise_only_input_errors_with_a_path(profile, case):
    name, text = case
    try:
        protocol = parse_protocol(text, f"{name}.json")
        compiled = compile_protocol(protocol, profile)
        audit_protocol(compiled, protocol, profile)
    except InputError as error:
        assert error.field or error.file, f"no place named: {error}"
        assert len(str(error)) < 2000
