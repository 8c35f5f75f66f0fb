"""The zfit.identify/1 JSON contract: the schema file, a validator, and outputs.

`validate` is a small validator of the JSON Schema keywords the schema uses
(type, const, enum, required, properties, additionalProperties, items,
minItems, maxItems, minimum, exclusiveMinimum, oneOf, $ref, propertyNames;
JSON Schema 2020-12 semantics, https://json-schema.org/draft/2020-12).  Where
the general-purpose `jsonschema` library is installed, the schema and the
outputs are also checked with it.
"""

import json
import math
import warnings
from pathlib import Path

import numpy as np
import pytest

from zfit.fit._circuits import CapacitorCircuit, InductorCircuit
from zfit.data._connection import InstrumentNoise, impedance_from_s, s_from_impedance, sigma_z_from_s
from zfit._errors import MeasurementWarning
from zfit.identification._pipeline import identify
from zfit.data._sweep import make_sweep

SCHEMA = json.loads((Path(__file__).parents[1] / "zfit" / "schemas" / "identify.schema.json").read_text())

_TYPES = {
    "object": lambda v: isinstance(v, dict),
    "array": lambda v: isinstance(v, list),
    "string": lambda v: isinstance(v, str),
    "boolean": lambda v: isinstance(v, bool),
    "null": lambda v: v is None,
    "integer": lambda v: isinstance(v, int) and not isinstance(v, bool),
    "number": lambda v: isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v),
}


class SchemaError(AssertionError):
    pass


def _resolve(ref, root):
    assert ref.startswith("#/")
    node = root
    for part in ref[2:].split("/"):
        node = node[part]
    return node


def validate(value, schema, root=None, path="$"):
    """Raise SchemaError if `value` does not satisfy `schema`."""
    root = schema if root is None else root
    if "$ref" in schema:
        validate(value, _resolve(schema["$ref"], root), root, path)
    if "type" in schema:
        types = schema["type"] if isinstance(schema["type"], list) else [schema["type"]]
        if not any(_TYPES[t](value) for t in types):
            raise SchemaError(f"{path}: {value!r} is not of type {types}")
    if "const" in schema and value != schema["const"]:
        raise SchemaError(f"{path}: {value!r} is not {schema['const']!r}")
    if "enum" in schema and value not in schema["enum"]:
        raise SchemaError(f"{path}: {value!r} not in {schema['enum']}")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        if "minimum" in schema and value < schema["minimum"]:
            raise SchemaError(f"{path}: {value} < {schema['minimum']}")
        if "exclusiveMinimum" in schema and value <= schema["exclusiveMinimum"]:
            raise SchemaError(f"{path}: {value} <= {schema['exclusiveMinimum']}")
    if "oneOf" in schema:
        ok = 0
        for sub in schema["oneOf"]:
            try:
                validate(value, sub, root, path)
                ok += 1
            except SchemaError:
                pass
        if ok != 1:
            raise SchemaError(f"{path}: matches {ok} of the oneOf alternatives, not exactly one")
    if isinstance(value, dict):
        for key in schema.get("required", ()):
            if key not in value:
                raise SchemaError(f"{path}: missing key {key!r}")
        props = schema.get("properties", {})
        for key, item in value.items():
            if "propertyNames" in schema:
                validate(key, schema["propertyNames"], root, f"{path}.{key}(name)")
            if key in props:
                validate(item, props[key], root, f"{path}.{key}")
            elif schema.get("additionalProperties") is False:
                raise SchemaError(f"{path}: unexpected key {key!r}")
            elif isinstance(schema.get("additionalProperties"), dict):
                validate(item, schema["additionalProperties"], root, f"{path}.{key}")
    if isinstance(value, list):
        if "minItems" in schema and len(value) < schema["minItems"]:
            raise SchemaError(f"{path}: fewer than {schema['minItems']} items")
        if "maxItems" in schema and len(value) > schema["maxItems"]:
            raise SchemaError(f"{path}: more than {schema['maxItems']} items")
        if "items" in schema:
            for i, item in enumerate(value):
                validate(item, schema["items"], root, f"{path}[{i}]")


def _sweep(circuit, p, f, connection, seed, source="synthetic"):
    rng = np.random.default_rng(seed)
    noise = InstrumentNoise(1e-3, 1e-5)
    z = circuit.impedance(np.array(p), f)
    if connection == "impedance":
        sig = 1e-3 * np.abs(z)
        zm = z + sig * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2)
        return make_sweep(f, zm, sig, source=source, connection="impedance", noise=InstrumentNoise(1e-3, 1e-12))
    s = s_from_impedance(z, connection)
    sm = s + noise.sigma(s) * (rng.standard_normal(f.size) + 1j * rng.standard_normal(f.size)) / math.sqrt(2)
    return make_sweep(
        f, impedance_from_s(sm, connection), sigma_z_from_s(sm, connection, noise=noise), source=source,
        connection=connection, s_param=sm, reference_ohm=50.0, noise=noise,
    )


def _quiet_identify(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", MeasurementWarning)
        return identify(*args, **kwargs)


@pytest.fixture(scope="module")
def results():
    f = np.geomspace(1e4, 3e8, 501)
    out = [
        _quiet_identify(_sweep(InductorCircuit(), [10e-6, 0.5, 5e-12], f, "reflection", 1), at=(1e5, 1e6, 1e9)),
        _quiet_identify(_sweep(CapacitorCircuit(True), [100e-9, 0.02, 1e-9, 1e4], f, "shunt-thru", 2), at=(1e5,)),
        _quiet_identify(_sweep(CapacitorCircuit(), [100e-9, 0.02, 1e-9], f, "impedance", 3), "rational", at=(2e6,)),
        _quiet_identify(_sweep(InductorCircuit(True), [10e-6, 0.5, 5e-12, 2e5], f, "series-thru", 4), "inductor", rdc=0.5),
    ]
    return out


def test_schema_is_valid_json_schema():
    jsonschema = pytest.importorskip("jsonschema")
    jsonschema.Draft202012Validator.check_schema(SCHEMA)


def test_outputs_validate_with_own_validator(results):
    for r in results:
        d = json.loads(json.dumps(r.to_dict(), allow_nan=False))
        validate(d, SCHEMA)
    assert [r.model for r in results] == ["inductor", "capacitor", "rational", "inductor"]


def test_outputs_validate_with_jsonschema(results):
    jsonschema = pytest.importorskip("jsonschema")
    for r in results:
        jsonschema.validate(r.to_dict(), SCHEMA, cls=jsonschema.Draft202012Validator)


def test_validator_rejects_what_the_contract_forbids(results):
    d = results[0].to_dict()
    for bad in (
        {**d, "schema": "zfit.identify/2"},
        {**d, "model": "resistor"},
        {**d, "parameters": {"L": {"value": "10u", "std": None, "unit": "H"}}},  # a string, never
        {**d, "srf": {**d["srf"], "where": "inside"}},
        {**d, "fit": {k: v for k, v in d["fit"].items() if k != "valid_band_hz"}},
        {**d, "extra_key": 1},
    ):
        with pytest.raises(SchemaError):
            validate(bad, SCHEMA)


def test_json_keys_and_units_of_the_contract(results):
    ind, cap, rat, ind_rdc = (r.to_dict() for r in results)
    assert ind["schema"] == "zfit.identify/1"
    assert {k: v["unit"] for k, v in ind["parameters"].items()} == {"L": "H", "R_s": "ohm", "C_p": "F"}
    assert {k: v["unit"] for k, v in cap["parameters"].items()} == {"C": "F", "ESR": "ohm", "ESL": "H", "R_leak": "ohm"}
    assert rat["parameters"] == {} and rat["topology"].startswith("rational model with")
    assert all(isinstance(v["value"], float) and isinstance(v["std"], float) for v in ind["parameters"].values())
    assert set(ind["srf"]) >= {"value_hz", "std_hz", "where", "bound_hz"}
    assert set(ind["fit"]) >= {"rms_normalized_residual", "points", "f_min_hz", "f_max_hz", "valid_band_hz"}
    assert [s["f_hz"] for s in ind["spot"]] == [1e5, 1e6, 1e9]
    assert [s["in_band"] for s in ind["spot"]] == [True, True, False]
    assert ind_rdc["rdc"] == {"value": 0.5, "std": 0.005, "unit": "ohm"}
    assert ind["fit"]["points"] == 501 and ind["fit"]["f_min_hz"] == 1e4
