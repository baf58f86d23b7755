"""Strict JSON (RFC 8259 sections 6 and 8.2: no NaN or Infinity, Unicode text): what Python's json accepts and
stimlab refuses, each with the path of the value."""

import pytest

from stimlab.errors import InputError
from stimlab.jsonio import MAX_DEPTH, check_value, dumps, loads


@pytest.mark.parametrize("text,field,words", [
    ('{"a": [1, NaN]}', "a[1]", "NaN"),
    ('{"a": {"b": Infinity}}', "a.b", "Infinity"),
    ('{"a": -Infinity}', "a", "-Infinity"),
    ('{"t": 1e400}', "t", "1e400"),
    ('{"id": 1180591620717411303424}', "id", "out of range"),
    ('{"title": "\\ud800"}', "title", "surrogate"),
])
def test_values_json_cannot_carry_are_refused_with_their_path(text, field, words):
    with pytest.raises(InputError, match=words) as refused:
        loads(text, file="p.json")
    assert refused.value.field == field and refused.value.file == "p.json"


def test_nesting_beyond_the_limit_is_refused_not_a_recursion_error():
    with pytest.raises(InputError, match="nested"):
        loads("[" * 100_000 + "]" * 100_000)
    with pytest.raises(InputError, match="nested"):
        loads("[" * (MAX_DEPTH + 2) + "]" * (MAX_DEPTH + 2))
    assert loads("[" * 10 + "]" * 10) == [[[[[[[[[[]]]]]]]]]]


def test_syntax_errors_say_where():
    with pytest.raises(InputError, match="line 2, column 1"):
        loads('{"a": 1,\n}')


def test_bytes_must_be_utf8():
    assert loads('{"name": "Vale Street"}'.encode()) == {"name": "Vale Street"}
    with pytest.raises(InputError, match="not UTF-8"):
        loads(b'{"a": "\xff"}')


def test_dumps_refuses_non_finite_numbers():
    with pytest.raises(ValueError):
        dumps({"a": float("nan")})
    assert check_value({"a": [1, 2.5, "x", None, True]}) == {"a": [1, 2.5, "x", None, True]}
