"""The network-file reader is strict (DESIGN.md §4): exact format and version, required keys
with their types, no NaN/Infinity, no cycles or forward references, no duplicate names, bounded
sizes; and a soft output of exactly 0.5 reads as 0 (DESIGN.md §4: 1 where it EXCEEDS 0.5)."""

from __future__ import annotations

import json

import numpy as np
import pytest

from thresholdc.cli import main
from thresholdc.compiler import compile_rules
from thresholdc.errors import NetworkFileError
from thresholdc.logic import source_from_text
from thresholdc.network import fileformat
from thresholdc.network.fileformat import dumps, loads
from thresholdc.verification import verify_network

ADDER = "input a, b, cin\noutput sum, carry\ncarry = majority(a, b, cin)\nsum = a ^ b ^ cin\n"


def good() -> dict:
    return json.loads(dumps(compile_rules(ADDER, synthesis=False)))


def refused(d, message: str) -> None:
    text = d if isinstance(d, str) else json.dumps(d)
    with pytest.raises(NetworkFileError, match=message) as info:
        loads(text, "bad.json")
    assert "\n" not in info.value.render().split("\n")[0]


def test_the_good_file_reads():
    assert loads(json.dumps(good())).outputs[0].name == "sum"


@pytest.mark.parametrize("version", [True, 1.0, "1", [1], None, 2, 0])
def test_version_must_be_the_integer_1(version):
    d = good()
    d["version"] = version
    refused(d, "unsupported network file version")


def test_missing_version_is_refused():
    d = good()
    del d["version"]
    refused(d, 'missing "version"')


@pytest.mark.parametrize("fmt", [None, "thresholdc-network ", "THRESHOLDC-NETWORK", ["x"], 1])
def test_format_must_be_the_exact_string(fmt):
    d = good()
    d["format"] = fmt
    refused(d, "not a thresholdc network file")


@pytest.mark.parametrize("key", ["inputs", "neurons", "outputs", "meta"])
def test_missing_top_level_keys_are_refused(key):
    d = good()
    del d[key]
    refused(d, f'missing "{key}"')


@pytest.mark.parametrize("key", fileformat.NEURON_KEYS[1:])
def test_missing_neuron_keys_are_refused(key):
    d = good()
    del d["neurons"][0][key]
    refused(d, f'missing "{key}"')


@pytest.mark.parametrize(
    "change,message",
    [
        (lambda d: d["neurons"][0].update(layer=1.0), '"layer" must be an integer'),
        (lambda d: d["neurons"][0].update(layer=True), '"layer" must be an integer'),
        (lambda d: d["neurons"][0].update(bias=True), '"bias" must be a finite number'),
        (lambda d: d["neurons"][0]["weights"].__setitem__(0, False), '"weights" must be'),
        (lambda d: d["neurons"][0].update(activation=["step"]), "unknown activation"),
        (lambda d: d["neurons"][0].update(role=None), "unknown role"),
        (lambda d: d["neurons"][0].update(origin=3), '"origin" must be a string or null'),
        (lambda d: d.update(inputs="a"), '"inputs" must be a list of names'),
        (lambda d: d.update(meta=[]), '"meta" must be an object'),
        (lambda d: d["meta"].update(cones={"x": {"root": 1}}), '"meta.cones" must map'),
        (lambda d: d["meta"].update(verification="equal"), '"meta.verification" must be'),
        (lambda d: d.update(features=[{"name": "a"}]), "unknown kind"),
        (lambda d: d["neurons"][0]["weights"].__setitem__(0, 10**400), '"weights" must be'),
    ],
)
def test_wrong_types_are_refused(change, message):
    d = good()
    change(d)
    refused(d, message)


def test_duplicate_output_names_are_refused():
    d = good()
    d["outputs"].append(dict(d["outputs"][0]))
    refused(d, "output 'sum' is listed twice")


def test_duplicate_input_names_are_refused():
    d = good()
    d["inputs"].append("a")
    refused(d, "input unit 'a' is listed twice")


@pytest.mark.parametrize("constant", ["NaN", "Infinity", "-Infinity", "1e999", "-1e400"])
def test_nan_and_infinity_are_refused(constant):
    text = json.dumps(good()).replace('"bias": -1.5', f'"bias": {constant}', 1)
    assert constant in text
    refused(text, "not a JSON network file")


def test_nan_in_meta_is_refused_too():
    text = json.dumps(good())[:-1] + ', "x": NaN}'
    refused(text, "NaN is not a JSON number")


def test_a_cycle_is_refused():
    d = good()
    first, second = d["neurons"][0], d["neurons"][1]
    first["inputs"].append(second["name"])
    first["weights"].append(1)
    refused(d, "reads unknown unit .* must come before their readers")


def test_a_self_loop_is_refused():
    d = good()
    n = d["neurons"][0]
    n["inputs"].append(n["name"])
    n["weights"].append(1)
    refused(d, "reads unknown unit")


def test_a_forward_reference_is_refused():
    d = good()
    d["neurons"].reverse()
    refused(d, "must come before their readers")


def test_deep_nesting_and_huge_integers_are_one_clear_error():
    refused("[" * 100_000 + "]" * 100_000, "not a JSON network file")
    refused('{"format": "thresholdc-network", "version": ' + "9" * 5000 + "}",
            "not a JSON network file")


def test_huge_claimed_sizes_are_refused_before_allocation(tmp_path, monkeypatch):
    monkeypatch.setattr(fileformat, "MAX_UNITS", 5)
    refused(good(), "exceed the reader's bound of 5")
    monkeypatch.setattr(fileformat, "MAX_FILE_BYTES", 10)
    p = tmp_path / "big.json"
    p.write_text(json.dumps(good()), encoding="utf-8")
    with pytest.raises(NetworkFileError, match="larger than the reader's bound"):
        fileformat.load(str(p))


# ---- a soft output of exactly 0.5 is read as 0 ---------------------------------------------

HALF = {
    "format": "thresholdc-network", "version": 1, "inputs": ["a"],
    "neurons": [{"name": "y", "layer": 1, "inputs": ["a"], "weights": [0], "bias": 0,
                 "activation": "sigmoid", "role": "gate", "origin": "y"}],
    "outputs": [{"name": "y", "source": "y"}], "meta": {},
}


def test_a_sigmoid_output_of_exactly_one_half_reads_as_false(tmp_path, capsys):
    # DESIGN.md §4: a soft network is read as 1 where its output exceeds 0.5; sigmoid(0) = 0.5
    net = loads(json.dumps(HALF))
    assert np.array_equal(net.evaluate([[0], [1]]), [[0.5], [0.5]])
    assert net.decide([[0], [1]]).tolist() == [[False], [False]]
    false_rules = source_from_text("input a\noutput y\ny = a and not a\n", "f.rules")
    true_rules = source_from_text("input a\noutput y\ny = a or not a\n", "t.rules")
    for method in ("exhaustive", "bounds", "auto"):
        assert verify_network(net, false_rules, method=method).result == "equal", method
        assert verify_network(net, true_rules, method=method).result == "different", method
    path = tmp_path / "half.json"
    path.write_text(json.dumps(HALF), encoding="utf-8")
    rules = tmp_path / "t.rules"
    rules.write_text("input a\noutput y\ny = a or not a\n", encoding="utf-8")
    assert main(["verify", str(path), str(rules)]) == 1
    capsys.readouterr()
