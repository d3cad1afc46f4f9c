"""The train command: same command, same bytes; bad data writes nothing; the JSON log."""

import json
import os

import numpy as np
import pytest

from thresholdc.cli import main
from thresholdc.export import save_any
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.network.fileformat import load

RULES = Network(
    ("a", "b", "c"),
    (
        Neuron("ab", 1, ("a", "b"), (1, 1), -1.5, origin="y"),
        Neuron("y", 2, ("ab", "c"), (1, 1), -0.5, origin="y"),
    ),
    (Output("y", "y"),),
    meta={"tool": "thresholdc test", "options": {}},
)


@pytest.fixture
def files(tmp_path):
    net = tmp_path / "rules.json"
    save_any(RULES, str(net))
    rng = np.random.default_rng(0)
    X = rng.integers(0, 2, size=(40, 3))
    y = (X[:, 0] * X[:, 1] + X[:, 2] > 0).astype(int)
    y[:2] = 1 - y[:2]  # two noisy labels
    lines = ["a,b,c,label"] + [",".join(map(str, [*r, t])) for r, t in zip(X, y)]
    data = tmp_path / "obs.csv"
    data.write_text("\n".join(lines) + "\n")
    return tmp_path, str(net), str(data)


FAST = ["--epochs", "5", "--label", "y=label"]


def test_same_command_same_bytes(files, capsys):
    tmp, net, data = files
    outs = [str(tmp / "one.json"), str(tmp / "two.json")]
    for out in outs:
        assert main(["train", net, data, "-o", out, "--seed", "4", *FAST]) == 0
    one, two = (open(p, "rb").read() for p in outs)
    assert one == two
    text = one.decode()
    assert str(tmp) not in text and "obs.csv" not in text  # no paths in the file
    trained = load(outs[0])
    assert trained.is_strict()
    t = trained.meta["training"]
    assert t["options"]["seed"] == 4 and t["options"]["epochs"] == 5
    assert t["data"]["labels"] == {"y": "label"} and len(t["data"]["sha256"]) == 64
    assert "trained" in capsys.readouterr().out
    assert main(["train", net, data, "-o", outs[1], "--seed", "5", *FAST]) == 0
    assert open(outs[1], "rb").read() != one


def test_json_log(files, capsys):
    tmp, net, data = files
    out = str(tmp / "t.json")
    code = main(["train", net, data, "-o", out, "--json", "--anchor", "0.01",
                 "--validation", "0.25", "--widen", "1", *FAST])
    assert code == 0
    log = json.loads(capsys.readouterr().out)
    assert log["rows"] == 40 and log["outputs"] == ["y"]
    assert log["anchor"] == 0.01 and log["search"] is None
    assert log["init"] == "certified"  # a compiled network without its rule file
    assert "no rule file at hand" in log["notes"][0]
    assert log["held_out"]["rows"] == 10
    assert [e["epoch"] for e in log["epochs"]][0] == 0
    assert set(log["epochs"][0]) == {"epoch", "loss", "penalty", "accuracy",
                                     "validation_loss", "validation_accuracy"}
    assert log["before"]["outputs"][0]["name"] == "y"
    assert 0 <= log["after"]["outputs"][0]["accuracy"] <= 1
    roles = [n.role for n in load(out).neurons]
    assert roles.count("extra") == 1


def test_freeze_from_the_command_line(files, capsys):
    tmp, net, data = files
    out = str(tmp / "f.json")
    assert main(["train", net, data, "-o", out, "--freeze", "ab", "--anchor", "0",
                 "--json", *FAST]) == 0
    assert json.loads(capsys.readouterr().out)["frozen"] == ["ab"]


@pytest.mark.parametrize(
    "csv_text,line,message",
    [
        ("", 1, "empty file"),
        ("a,b,c,label\n", 2, "no data rows"),
        ("a,b,label\n1,1,1\n", 1, "missing column 'c'"),
        ("a,b,c,label\n1,1,1,1\n1,1,x,0\n", 3, "column 'c': expected 0/1 or true/false"),
    ],
)
def test_bad_data_writes_nothing(files, capsys, csv_text, line, message):
    tmp, net, _ = files
    bad = tmp / "bad.dat"
    bad.write_text(csv_text)
    out = tmp / "never.json"
    assert main(["train", net, str(bad), "-o", str(out), *FAST]) == 2
    first = capsys.readouterr().err.splitlines()[0]
    assert first.startswith(f"thresholdc: error: {bad}:{line}: {message}")
    assert not out.exists()
    assert not [f for f in os.listdir(tmp) if f.startswith(".thresholdc-")]


def test_usage_errors(files, capsys):
    tmp, net, data = files
    assert main(["train", net, data, "-o", str(tmp / "x.txt"), *FAST]) == 2
    assert "unknown output suffix '.txt'" in capsys.readouterr().err
    assert main(["train", net, data, "-o", str(tmp / "x.json"), "--epochs", "2"]) == 2
    assert "no labels" in capsys.readouterr().err
    with pytest.raises(SystemExit) as info:
        main(["train", net, data, "-o", str(tmp / "x.json"), "--anchor", "lots"])
    assert info.value.code == 2
    assert main(["train", net, data, "-o", str(tmp / "x.json"), "--freeze", "q", *FAST]) == 2
    assert "--freeze: no neuron named 'q'" in capsys.readouterr().err
    assert not (tmp / "x.json").exists()


def test_random_baseline_width_from_the_command_line(files, capsys):
    tmp, net, data = files
    out = str(tmp / "cold.json")
    assert main(["train", net, data, "-o", out, "--init", "random", "--hidden", "5",
                 "--seed", "1", *FAST]) == 0
    summary = capsys.readouterr().out
    assert "one dense hidden layer of 5 units" in summary
    trained = load(out)
    assert trained.depth == 2 and sum(n.layer == 1 for n in trained.neurons) == 5
    assert main(["train", net, data, "-o", str(tmp / "x.json"), "--hidden", "-1", *FAST]) == 2
