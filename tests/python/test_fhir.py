"""`extract --format fhir` bundles, validated with fhir.resources 6.1.0 (FHIR R4, 4.0.1),
and checked against the LOINC codes of the FHIR R4 vital-signs profile.

Vital-signs codes: FHIR R4 (4.0.1) value set observation-vitalsignresult
(hl7.org/fhir/R4/valueset-observation-vitalsignresult.html) and the vital-signs profiles
built on it; the blood-pressure profile uses the panel 85354-9 with components 8480-6 and
8462-4. Condition verification codes: FHIR R4 CodeSystem condition-ver-status.
"""

import copy
import json
import pathlib
import subprocess

import fhir.resources
import pydantic
import pytest
from fhir.resources.bundle import Bundle

from conftest import fixture

# Source: FHIR R4 (4.0.1) observation-vitalsignresult value set, as named above.
VITAL_SIGNS_LOINC = {
    "heart_rate": "8867-4",
    "respiratory_rate": "9279-1",
    "spo2": "2708-6",
    "temperature": "8310-5",
    "weight": "29463-7",
    "height": "8302-2",
    "systolic_bp": "8480-6",
    "diastolic_bp": "8462-4",
}
BP_PANEL = "85354-9"
UCUM = "http://unitsofmeasure.org"
LOINC = "http://loinc.org"
CONCEPT = "https://tidemark.invalid/fhir/CodeSystem/concept"
SPAN_EXT = "https://tidemark.invalid/fhir/StructureDefinition/source-span"


def test_library_is_the_r4_release():
    assert fhir.resources.__fhir_version__ == "4.0.1"


def codes(resource, system):
    return [c["code"] for c in resource["code"]["coding"] if c["system"] == system]


def span_parts(resource):
    (ext,) = [e for e in resource["extension"] if e["url"] == SPAN_EXT]
    return {p["url"]: next(v for k, v in p.items() if k.startswith("value")) for p in ext["extension"]}


def resources(bundle, kind):
    return [e["resource"] for e in bundle["entry"] if e["resource"]["resourceType"] == kind]


def quantities(obs):
    if "valueQuantity" in obs:
        yield obs["valueQuantity"]
    for c in obs.get("component", []):
        if "valueQuantity" in c:
            yield c["valueQuantity"]


def check_observation(obs):
    """The rules every exported Observation follows."""
    concept = next(iter(codes(obs, CONCEPT)), None)
    if concept in VITAL_SIGNS_LOINC:
        assert codes(obs, LOINC) == [VITAL_SIGNS_LOINC[concept]]
        assert obs["category"][0]["coding"][0]["code"] == "vital-signs"
    if codes(obs, LOINC) == [BP_PANEL]:
        comp = [c["code"]["coding"][0]["code"] for c in obs["component"]]
        assert comp == [VITAL_SIGNS_LOINC["systolic_bp"], VITAL_SIGNS_LOINC["diastolic_bp"]]
    for q in quantities(obs):
        if "code" in q:
            assert q["system"] == UCUM


def test_handbuilt_bundle_is_valid_fhir_r4():
    data = fixture("fhir-handbuilt.json")
    note = fixture("note.txt").encode("utf-8")
    bundle = Bundle.parse_obj(data)
    assert bundle.type == "collection"
    obs = resources(data, "Observation")
    for o in obs:
        check_observation(o)
        # The span extension points at the text it names.
        parts = span_parts(o)
        assert note[parts["start"] : parts["end"]].decode("utf-8") == parts["text"]
    # "BP 98/60" is one panel with the two components; its date is the note's.
    (bp,) = [o for o in obs if codes(o, LOINC) == [BP_PANEL]]
    assert [c["valueQuantity"]["value"] for c in bp["component"]] == [98, 60]
    assert bp["effectiveDateTime"] == "2026-03-04"
    (temp,) = [o for o in obs if codes(o, LOINC) == ["8310-5"]]
    assert temp["valueQuantity"]["code"] == "Cel"
    (cr,) = [o for o in obs if codes(o, CONCEPT) == ["creatinine"]]
    assert cr["valueQuantity"]["code"] == "umol/L"
    assert cr["category"][0]["coding"][0]["code"] == "laboratory"
    # The unitless weight keeps its number and says why no UCUM code is given.
    (wt,) = [o for o in obs if codes(o, LOINC) == ["29463-7"]]
    assert wt["valueQuantity"] == {"value": 82.4}
    assert "no unit" in wt["note"][0]["text"]
    status = {
        c["code"]["coding"][0]["code"]: c["verificationStatus"]["coding"][0]["code"]
        for c in resources(data, "Condition")
    }
    assert status == {
        "crackles": "refuted",
        "s3": "provisional",
        "peripheral_edema": "confirmed",
    }


def drop_code(r):
    del r["code"]  # Observation.code is 1..1 in R4


def bad_date(r):
    r["effectiveDateTime"] = "2026-13-45"  # not an R4 dateTime


def unknown_element(r):
    r["valueQuantity"]["colour"] = "blue"  # not an element of Quantity


@pytest.mark.parametrize("break_it", [drop_code, bad_date, unknown_element])
def test_validator_rejects_a_broken_bundle(break_it):
    # Negative controls: the library does reject what R4 forbids.
    data = copy.deepcopy(fixture("fhir-handbuilt.json"))
    obs = next(
        e["resource"]
        for e in data["entry"]
        if e["resource"]["resourceType"] == "Observation" and "valueQuantity" in e["resource"]
    )
    break_it(obs)
    with pytest.raises(pydantic.ValidationError):
        Bundle.parse_obj(data)


NOTE = (
    "Obs 12/03/2026: BP 98/60, HR 88, RR 20, SpO2 94% on air, T 37.1 °C\n"
    "Wt 82.4 kg\n"
    "Cr 130 µmol/L, Na 134, K 4.9\n"
    "O/E: JVP raised, bibasal crackles, no peripheral oedema 😀\n"
)


def test_binary_bundle_is_valid_and_coded(binary, tmp_path):
    path = tmp_path / "ward-note.txt"
    path.write_text(NOTE, encoding="utf-8")
    p = subprocess.run(
        [binary, "extract", "--format", "fhir", "--date-order", "dmy", str(path)],
        capture_output=True,
        timeout=60,
    )
    assert p.returncode == 0, p.stderr
    data = json.loads(p.stdout)
    Bundle.parse_obj(data)
    obs = resources(data, "Observation")
    if not obs:
        pytest.skip("the binary extracted no observations: extraction is not merged yet")
    for o in obs:
        check_observation(o)
    loinc = {c for o in obs for c in codes(o, LOINC)}
    for concept in ("heart_rate", "respiratory_rate", "spo2", "temperature", "weight"):
        assert VITAL_SIGNS_LOINC[concept] in loinc, concept
    (bp,) = [o for o in obs if codes(o, LOINC) == [BP_PANEL]]
    assert [c["valueQuantity"]["value"] for c in bp["component"]] == [98, 60]
    status = {
        c["code"]["coding"][0]["code"]: c["verificationStatus"]["coding"][0]["code"]
        for c in resources(data, "Condition")
    }
    assert status.get("crackles") == "confirmed"
    assert status.get("peripheral_edema") == "refuted"
