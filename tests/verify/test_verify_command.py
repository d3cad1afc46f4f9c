"""``thresholdc verify``: the per-output table and --json carry the sound verdicts."""

from __future__ import annotations

import json

import pytest

from thresholdc.cli import main

pytest.importorskip("pysat.solvers")

XS = [f"x{i}" for i in range(20)]
TEXT = (f"input {', '.join(XS)}\noutput {', '.join(f'y{j}' for j in range(8))}\n"
        "s = atleast(2, x0, x1, x2)\n"
        + "".join(f"y{j} = s and (x{3 + 2 * j} or x{4 + 2 * j})\n" for j in range(8)))


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out = capsys.readouterr().out
    return code, out


@pytest.fixture
def files(tmp_path, capsys):
    right = tmp_path / "k2.rules"
    right.write_text(TEXT)
    wrong = tmp_path / "k3.rules"
    wrong.write_text(TEXT.replace("atleast(2", "atleast(3"))
    net = tmp_path / "k2.json"
    assert run(capsys, "compile", right, "-o", net)[0] == 0
    return net, right, wrong


def test_every_row_says_different_and_the_count_is_labelled(files, capsys):
    net, _, wrong = files
    code, out = run(capsys, "verify", net, wrong)
    assert code == 1
    rows = [line.split() for line in out.splitlines() if line.strip().startswith("y")]
    assert len(rows) == 8 and all(r[1] == "different" for r in rows)
    # local + SAT do not count: the column of counts found is there, not an exact column only
    assert "counterexamples found" in out and "yes" not in out
    code, out = run(capsys, "verify", net, wrong, "--method", "exhaustive")
    assert code == 1 and "disagreeing inputs" in out and "counterexamples found" not in out
    rows = [line.split() for line in out.splitlines() if line.strip().startswith("y")]
    # 2^20 · 3/8 (exactly two of x0..x2) · 3/4 (one of the output's two inputs) = 294,912
    assert [r[2] for r in rows] == ["294912"] * 8


def test_json_fields(files, capsys):
    net, right, wrong = files
    code, out = run(capsys, "verify", net, wrong, "--json")
    data = json.loads(out)
    assert code == 1 and data["result"] == "different"
    for o in data["outputs"]:
        assert o["verdict"] == "different" and o["agrees"] is False
        assert o["disagreements"] is None and o["found"] >= 1 and o["bound"] is None
    code, out = run(capsys, "verify", net, right, "--json")
    data = json.loads(out)
    assert code == 0
    assert all(o["verdict"] == "equal" and o["agrees"] is True and o["disagreements"] == 0
               for o in data["outputs"])


def test_undecided_rows_name_their_bound(files, capsys):
    net, _, wrong = files
    code, out = run(capsys, "verify", net, wrong, "--method", "exhaustive", "--max-inputs", "8",
                    "--json")
    data = json.loads(out)
    assert code == 2 and data["result"] == "undecided"
    assert all(o["verdict"] == "undecided" and o["agrees"] is False and "bound of 8" in o["bound"]
               for o in data["outputs"])


def test_per_definition_option(tmp_path, capsys):
    text = "input a, b, c, d\nm = a and b\nn = atleast(2, b, c, d)\ny = m or c\nz = n xor a\n"
    right = tmp_path / "d.rules"
    right.write_text(text)
    wrong = tmp_path / "d3.rules"
    wrong.write_text(text.replace("atleast(2", "atleast(3"))
    net = tmp_path / "d.json"
    assert run(capsys, "compile", right, "-o", net, "--no-synthesis")[0] == 0
    code, out = run(capsys, "verify", net, wrong, "--definitions", "--json")
    data = json.loads(out)
    assert code == 1 and data["definitions"]["result"] == "different"
    # n = atleast(2, b, c, d) against atleast(3, …): exactly two of b, c, d (3 of 8), a free
    assert {v["name"]: (v["verdict"], v["disagreements"]) for v in
            data["definitions"]["verdicts"]} == {
        "m": ("equal", 0), "y": ("equal", 0), "n": ("different", 6), "z": ("different", 6)}
    code, out = run(capsys, "verify", net, wrong, "--definitions")
    assert code == 1 and "definition  verdict" in out
