"""``thresholdc table`` (DESIGN.md §5): every row, streamed in chunks, typed inputs, bounds."""

from __future__ import annotations

import itertools
import json

import numpy as np

import thresholdc
from thresholdc.cli import main
from thresholdc.commands import table


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return str(p)


def test_a_table_longer_than_a_chunk_is_complete_and_in_order(tmp_path, capsys, monkeypatch):
    # DESIGN.md §5: the truth table of every output; 2^12 rows cross several chunk boundaries
    monkeypatch.setattr(table, "_CHUNK", 1000)
    n = 12
    names = [f"x{i}" for i in range(n)]
    src = write(tmp_path, "wide.rules",
                f"input {', '.join(names)}\nodd = parity({', '.join(names)})\n"
                "edge = x0 and not x11\n")
    code, out, _ = run(capsys, "table", src, "--limit", "0", "--json")
    assert code == 0
    t = json.loads(out)
    rows = np.array(t["rows"])
    k = np.arange(2**n)
    X = (k[:, None] >> np.arange(n - 1, -1, -1)) & 1  # first input the highest bit
    np.testing.assert_array_equal(rows[:, :n], X)
    np.testing.assert_array_equal(rows[:, n], X.sum(axis=1) % 2)
    np.testing.assert_array_equal(rows[:, n + 1], X[:, 0] & (1 - X[:, 11]))
    assert t["total_rows"] == t["shown_rows"] == 2**n
    code, text, _ = run(capsys, "table", src, "--limit", "0")
    lines = text.splitlines()
    assert len(lines) == 1 + 2**n
    cells = np.array([line.split() for line in lines[1:]])
    np.testing.assert_array_equal(cells[:, n], "|")
    np.testing.assert_array_equal(np.delete(cells, n, axis=1).astype(int), rows)


def test_categorical_inputs_take_their_values_in_order(tmp_path, capsys):
    # DESIGN.md §3 typed inputs: a categorical input is tested by value
    src = write(tmp_path, "cat.rules",
                "input colour: {red, green, blue}, size: {1, 22}, b\n"
                "hot = colour == red and size == 22 or b\nx = colour in {green, blue}\n")
    code, out, _ = run(capsys, "table", src, "--json", "--limit", "0")
    assert code == 0
    t = json.loads(out)
    want = []
    for colour, size, b in itertools.product(("red", "green", "blue"), ("1", "22"), (0, 1)):
        hot = int((colour == "red" and size == "22") or b == 1)
        want.append([colour, size, b, hot, int(colour in ("green", "blue"))])
    assert t["inputs"] == ["colour", "size", "b"] and t["outputs"] == ["hot", "x"]
    assert t["rows"] == want and t["total_rows"] == 12
    code, text, _ = run(capsys, "table", src, "--limit", "0")
    assert [line.split() for line in text.splitlines()[1:]] == [
        [str(c) for c in r[:3]] + ["|"] + [str(c) for c in r[3:]] for r in want
    ]


def test_a_real_input_is_refused_with_one_line(tmp_path, capsys):
    src = write(tmp_path, "real.rules", "input t: real, b\nhot = t > 30 or b\n")
    code, out, err = run(capsys, "table", src)
    assert code == 2 and out == ""
    assert err.splitlines() == [
        f"thresholdc: error: {src}: input 't' is real: a truth table needs inputs with a "
        "finite set of values (Boolean or categorical)"
    ]


def test_many_inputs_print_the_first_rows_and_refuse_all(tmp_path, capsys):
    names = [f"x{i}" for i in range(70)]
    src = write(tmp_path, "many.rules", f"input {', '.join(names)}\ny = x0 or x69\n")
    code, out, _ = run(capsys, "table", src, "--limit", "3")
    lines = out.splitlines()
    assert code == 0 and len(lines) == 5
    assert lines[-1] == f"(3 of {2**70} rows shown; --limit 0 prints all)"
    assert [line.split()[-1] for line in lines[1:4]] == ["0", "1", "0"]  # x69, then neither
    code, out, err = run(capsys, "table", src, "--limit", "0")
    assert code == 2 and out == ""
    assert err.startswith(f"thresholdc: error: {src}: the table has {2**70} rows")
    assert "--limit N" in err


def test_limit_and_unused_definitions(tmp_path, capsys):
    src = write(tmp_path, "u.rules", "input a, b\noutput y\ny = a and b\njunk = a or b\n")
    code, out, err = run(capsys, "table", src, "--limit", "2", "--json")
    t = json.loads(out)
    assert code == 0 and t["rows"] == [[0, 0, 0], [0, 1, 0]]
    assert (t["shown_rows"], t["total_rows"]) == (2, 4)
    assert err.startswith("thresholdc: warning: ") and "junk" in err


def test_an_error_while_evaluating_leaves_no_partial_table(tmp_path, capsys, monkeypatch):
    # DESIGN.md §5: one clear error, no half-written output
    from thresholdc.errors import DataError

    def fail(source, X):
        raise DataError("cannot evaluate", file=source.file)

    monkeypatch.setattr(table, "_evaluate", fail)
    src = write(tmp_path, "t.rules", "input a\ny = not a\n")
    for extra in ([], ["--json"]):
        code, out, err = run(capsys, "table", src, *extra)
        assert code == 2 and out == ""
        assert err == f"thresholdc: error: {src}: cannot evaluate\n"


def test_a_network_file_gives_the_table_of_its_rules(tmp_path, capsys, monkeypatch):
    # the network's decisions (bit-sliced for a step network) against the rules' reference
    # evaluator, row by row over several chunks; a broken network differs where it should
    monkeypatch.setattr(table, "_CHUNK", 300)
    text = ("input a, b, c, d, e, f, g, h, i, j\nu = atleast(3, a, b, c, d, e)\n"
            "y = u xor (f and not g)\nz = (h or i) and not j or u\n")
    rules = write(tmp_path, "t.rules", text)
    net = thresholdc.compile_rules(text)
    assert net.bit_plan is not None
    path = str(tmp_path / "t.json")
    net.save(path)
    code, from_rules, _ = run(capsys, "table", rules, "--limit", "0", "--json")
    assert code == 0
    code, from_net, _ = run(capsys, "table", path, "--limit", "0", "--json")
    assert code == 0 and from_net == from_rules
    # the float evaluator of the same network gives the same rows
    rows = np.array(json.loads(from_net)["rows"])
    _, V = net.run_units(rows[:, :10].astype(float))
    np.testing.assert_array_equal(rows[:, 10:], (V[net._output_rows] > 0.5).T)
    bad = net.neurons[-1]
    broken = type(net)(net.inputs, net.neurons[:-1] + (type(bad)(
        bad.name, bad.layer, bad.inputs, bad.weights, bad.bias + 1.0, bad.activation,
        bad.role, bad.origin),), net.outputs)
    broken.save(path)
    code, out, _ = run(capsys, "table", path, "--limit", "0", "--json")
    assert code == 0 and out != from_rules


def test_a_network_with_typed_inputs_is_refused(tmp_path, capsys):
    net = thresholdc.compile_rules("input c: {red, blue}\ny = c in {red}\n")
    path = str(tmp_path / "c.json")
    net.save(path)
    code, out, err = run(capsys, "table", path)
    assert code == 2 and out == ""
    assert "typed inputs" in err and len(err.splitlines()) == 1
