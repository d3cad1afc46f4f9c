"""The network file (DESIGN.md §4): key order, byte-identical output, and every read error."""

from __future__ import annotations

import json

import pytest

from thresholdc.compiler import compile_rules
from thresholdc.errors import NetworkFileError
from thresholdc.export import save_any
from thresholdc.network.fileformat import dumps, load, loads

FULL_ADDER = "input a, b, cin\noutput sum, carry\ncarry = majority(a, b, cin)\nsum = a ^ b ^ cin\n"


def test_keys_in_the_contract_order():
    data = json.loads(dumps(compile_rules(FULL_ADDER)))
    assert list(data) == ["format", "version", "inputs", "neurons", "outputs", "meta"]
    assert data["format"] == "thresholdc-network" and data["version"] == 1
    for n in data["neurons"]:
        assert list(n) == ["name", "layer", "inputs", "weights", "bias", "activation", "role",
                           "origin"]
    assert list(data["outputs"][0]) == ["name", "source"]
    assert list(data["meta"])[:4] == ["tool", "source_sha256", "options", "verification"]
    assert data["meta"]["verification"] == {"method": "exhaustive", "result": "equal"}


def test_same_rules_and_options_give_the_same_bytes():
    assert dumps(compile_rules(FULL_ADDER)) == dumps(compile_rules(FULL_ADDER))
    assert dumps(compile_rules(FULL_ADDER, layered=True)) == dumps(
        compile_rules(FULL_ADDER, layered=True))


def test_round_trip(tmp_path):
    net = compile_rules(FULL_ADDER, layered=True)
    p = tmp_path / "n.json"
    save_any(net, str(p))
    back = load(str(p))
    assert back == net and back.meta == net.meta


def test_meta_options_hold_every_shaping_option_and_no_paths():
    meta = compile_rules(FULL_ADDER).meta
    assert set(meta["options"]) >= {"activation", "layered", "synthesis", "encoding"}
    assert "output" not in meta["options"] and "time" not in json.dumps(meta)


def good() -> dict:
    return json.loads(dumps(compile_rules(FULL_ADDER, synthesis=False)))


@pytest.mark.parametrize(
    "change,message",
    [
        (lambda d: d.update(format="something"), "not a thresholdc network file"),
        (lambda d: d.update(version=7), "unsupported network file version 7"),
        (lambda d: d["neurons"][-1]["inputs"].append("ghost") or
         d["neurons"][-1]["weights"].append(1), "reads unknown unit 'ghost'"),
        (lambda d: d["neurons"][0]["weights"].append(3), "has 3 inputs but 4 weights"),
        (lambda d: d["neurons"][0].update(activation="swish"), "unknown activation 'swish'"),
        (lambda d: d["neurons"][0].update(layer=5), "has layer 5, but its inputs put it"),
        (lambda d: d["outputs"][0].update(source="nowhere"), "reads unknown unit 'nowhere'"),
        (lambda d: d["neurons"][0].update(bias="x"), '"bias" must be a finite number'),
        (lambda d: d.update(neurons=d["neurons"] + d["neurons"][:1]), "is used twice"),
    ],
)
def test_bad_network_files_are_refused_with_a_reason(change, message):
    d = good()
    change(d)
    with pytest.raises(NetworkFileError, match=message):
        loads(json.dumps(d), "bad.json")


def test_not_json_names_line_and_column():
    with pytest.raises(NetworkFileError) as info:
        loads('{\n  "format": \n}', "broken.json")
    text = info.value.render()
    assert text.startswith("thresholdc: error: broken.json:3:1: not a JSON network file")
    assert text.splitlines()[1:] == ["}", "^"]


@pytest.mark.parametrize("end", ["\n", "\r\n", "\r"])
def test_not_json_positions_count_every_line_end(end):
    # lines end at LF, CRLF or a bare CR, as in rule files and data files (json alone counts LF)
    with pytest.raises(NetworkFileError) as info:
        loads('{"a": "\u2028",\n  "format": \n}'.replace("\n", end), "broken.json")
    err = info.value
    assert (err.line, err.column) == (3, 1)
    assert err.render().splitlines()[1:] == ["}", "^"]
