"""`tidemark check --stdin-json` responses, validated against docs/schema with the
jsonschema package (JSON Schema draft 2020-12), and their UTF-16 columns recomputed with
Python's UTF-16 codec."""

import copy
import json
import subprocess

import jsonschema
import pytest

from conftest import ROOT, SCHEMA, fixture, utf16_units

REQUEST_SCHEMA = ROOT / "docs" / "schema" / "tidemark-check-request-1.schema.json"

NOTE = (
    "Feels better 😀 · T 36.9 °C\n"
    "Cr 130 µmol/L, K 4.1\n"
    "Wt 82.4\n"
    "O/E: no crackles, mild ankle oedema\n"
)


@pytest.fixture(scope="module")
def validator():
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def check(binary, request_bytes: bytes):
    p = subprocess.run(
        [binary, "check", "--stdin-json"],
        input=request_bytes,
        capture_output=True,
        timeout=60,
    )
    lines = p.stdout.decode("utf-8").splitlines()
    assert len(lines) == 1, p.stdout
    return p.returncode, json.loads(lines[0])


def spans(value):
    """Every span object in a response."""
    if isinstance(value, dict):
        if {"start", "end", "line", "column"} <= value.keys():
            yield value
        for v in value.values():
            yield from spans(v)
    elif isinstance(value, list):
        for v in value:
            yield from spans(v)


def assert_columns_agree(text: str, response):
    """Each span's columns, recomputed from its byte offsets with Python's codecs."""
    data = text.encode("utf-8")
    n = 0
    for s in spans(response):
        for off_key, line_key, col_key, u16_key in (
            ("start", "line", "column", "column_utf16"),
            ("end", "end_line", "end_column", "end_column_utf16"),
        ):
            before = data[: s[off_key]].decode("utf-8")
            line_start = before.rfind("\n") + 1
            assert s[line_key] == before.count("\n") + 1
            assert s[col_key] == len(before[line_start:]) + 1
            assert s[u16_key] == utf16_units(before[line_start:]) + 1
        n += 1
    return n


def test_handbuilt_response_matches_schema_and_codec(validator):
    response = fixture("check-handbuilt.json")
    validator.validate(response)
    # The fixture has spans after an emoji and after µ and °: all must agree.
    assert assert_columns_agree(fixture("note.txt"), response) >= 10


def test_schema_rejects_a_span_without_utf16_columns(validator):
    # Negative control: the schema is not a pass-everything schema.
    response = copy.deepcopy(fixture("check-handbuilt.json"))
    del response["diagnostics"][0]["span"]["column_utf16"]
    with pytest.raises(jsonschema.ValidationError):
        validator.validate(response)


def test_binary_response_matches_schema(binary, validator):
    req = {"text": NOTE, "path": "ward/bed-4.txt", "config": {"date_order": "dmy"}}
    code, response = check(binary, json.dumps(req).encode())
    assert code == 0
    validator.validate(response)
    assert response["ok"] is True
    assert response["path"] == "ward/bed-4.txt"
    assert response["document"]["source"] == "ward/bed-4.txt"
    assert_columns_agree(NOTE, response)


@pytest.mark.parametrize(
    "raw, code",
    [
        (b"{not json", "invalid-json"),
        (b"[1, 2]", "invalid-request"),
        (b'{"path": "x"}', "invalid-request"),
        (b'{"text": "x", "config": {"unit_system": "imperial"}}', "invalid-config"),
        (b"\xff\xfe", "invalid-json"),
    ],
)
def test_errors_are_json_too(binary, validator, raw, code):
    rc, response = check(binary, raw)
    assert rc == 2
    validator.validate(response)
    assert response["ok"] is False
    assert response["error"]["code"] == code


def test_empty_text_is_a_document_with_a_warning(binary, validator):
    rc, response = check(binary, b'{"text": ""}')
    assert rc == 0
    validator.validate(response)
    assert response["document"]["warnings"][0]["code"] == "empty"


def test_request_schema_agrees_with_the_binary(binary, validator):
    schema = json.loads(REQUEST_SCHEMA.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator.check_schema(schema)
    requests = jsonschema.Draft202012Validator(schema)
    good = [
        {"text": NOTE},
        {"text": NOTE, "path": None, "config": {"date_order": "mdy", "unit_system": "us"}},
    ]
    bad = [{"path": "x"}, {"text": 3}, {"text": "x", "config": {"unit_system": "imperial"}}]
    for req in good:
        requests.validate(req)
        code, response = check(binary, json.dumps(req).encode())
        assert code == 0 and response["ok"] is True
    for req in bad:
        assert not requests.is_valid(req)
        code, response = check(binary, json.dumps(req).encode())
        assert code == 2 and response["ok"] is False
        validator.validate(response)
