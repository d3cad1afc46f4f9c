"""The command line as a user meets it: exit codes, the error format, no half-written files."""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pytest

from thresholdc.cli import main

ADDER = "input a, b, cin\noutput sum, carry\ncarry = majority(a, b, cin)\nsum = a ^ b ^ cin\n"


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return str(p)


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_compile_writes_a_network_and_prints_a_summary(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    net = str(tmp_path / "adder.json")
    code, out, err = run(capsys, "compile", src, "-o", net)
    assert code == 0, err
    for label in ("inputs", "outputs", "neurons", "parameters", "depth", "verification"):
        assert f"  {label}" in out
    assert "exhaustive: equal" in out
    data = json.loads(open(net, encoding="utf-8").read())
    assert data["inputs"] == ["a", "b", "cin"]
    assert [o["name"] for o in data["outputs"]] == ["sum", "carry"]


def test_compile_json_summary(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    code, out, _ = run(capsys, "compile", src, "-o", str(tmp_path / "n.json"), "--json",
                       "--layered")
    assert code == 0
    s = json.loads(out)
    assert s["verification"]["result"] == "equal"
    assert s["parameters"]["total"] == s["parameters"]["weights"] + s["parameters"]["biases"]
    assert all(e["relay"] >= 0 for e in s["layers"])


def test_compile_is_byte_identical_across_runs(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    a, b = str(tmp_path / "a.json"), str(tmp_path / "b.json")
    assert run(capsys, "compile", src, "-o", a)[0] == 0
    assert run(capsys, "compile", src, "-o", b)[0] == 0
    assert open(a, "rb").read() == open(b, "rb").read()


def test_verify_equal_then_different(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    net = str(tmp_path / "n.json")
    run(capsys, "compile", src, "-o", net)
    code, out, _ = run(capsys, "verify", net, src)
    assert code == 0 and "equal" in out
    wrong = write(tmp_path, "wrong.rules", ADDER.replace("majority(a, b, cin)", "a and b"))
    code, out, _ = run(capsys, "verify", net, wrong)
    assert code == 1
    assert "counterexamples" in out and "carry expected" in out
    code, out, _ = run(capsys, "verify", net, wrong, "--json")
    report = json.loads(out)
    assert code == 1 and report["result"] == "different"
    carry = next(o for o in report["outputs"] if o["name"] == "carry")
    # a and b vs majority differ where exactly one of a, b is set and cin is set: 2 rows
    assert carry["disagreements"] == 2 and len(carry["counterexamples"]) == 2


def test_verify_with_different_names_is_usage_error(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    net = str(tmp_path / "n.json")
    run(capsys, "compile", src, "-o", net)
    other = write(tmp_path, "other.rules", "input a, b, c\nsum = a\ncarry = b\n")
    code, _, err = run(capsys, "verify", net, other)
    assert code == 2
    assert "input names differ" in err and "only in the network: cin" in err


def test_verify_beyond_the_bound_says_so(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    net = str(tmp_path / "n.json")
    run(capsys, "compile", src, "-o", net)
    code, out, err = run(capsys, "verify", net, src, "--max-inputs", "2", "--method",
                         "exhaustive")
    assert code == 2
    assert "more than the exhaustive bound of 2" in out + err


@pytest.mark.parametrize(
    "text,first,caret",
    [
        ("input a\ny = a and\n", "bad.rules:2:10: expected an expression after 'and'", 9),
        ("input a\ny = a or b\n", "bad.rules:2:10: unknown name 'b'", 9),
        ("input a\ny = a\ny = not a\n", "bad.rules:3:1: 'y' is defined twice", 0),
        ("input a\nx = y\ny = x\n", "bad.rules:2:1: cyclic definition: x -> y -> x", 0),
        ("input a\noutput z\ny = a\n", "bad.rules:2:8: output 'z' is never defined", 7),
        ("input a, b\ny = atleast(3, a, b)\n", "bad.rules:2:13: k of atleast must be", 12),
        ("input a, b\ny = 2.5*a + b >= 1\n", "bad.rules:2:5: coefficients must be integers", 4),
    ],
)
def test_rule_errors_follow_the_error_format(tmp_path, capsys, text, first, caret):
    src = write(tmp_path, "bad.rules", text)
    out_file = tmp_path / "out.json"
    code, out, err = run(capsys, "compile", src, "-o", str(out_file))
    lines = err.splitlines()
    assert code == 2
    assert lines[0].startswith("thresholdc: error: ") and first in lines[0]
    assert len(lines) == 3
    assert lines[1] == text.splitlines()[int(first.split(":")[1]) - 1]
    assert lines[2] == " " * caret + "^"
    assert not out_file.exists()
    assert os.listdir(tmp_path) == ["bad.rules"]  # no temporary file left behind


def test_empty_program_has_no_position(tmp_path, capsys):
    src = write(tmp_path, "empty.rules", "# only a comment\n")
    code, _, err = run(capsys, "compile", src, "-o", str(tmp_path / "x.json"))
    assert code == 2
    assert err.splitlines()[0].startswith(f"thresholdc: error: {src}: empty program")
    assert len(err.splitlines()) == 1


def test_missing_file(tmp_path, capsys):
    code, _, err = run(capsys, "compile", str(tmp_path / "nope.rules"), "-o",
                       str(tmp_path / "x.json"))
    missing = tmp_path / "nope.rules"
    assert code == 2 and err.strip() == f"thresholdc: error: {missing}: no such file"


def test_unknown_output_suffix_lists_the_supported_ones(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    code, _, err = run(capsys, "compile", src, "-o", str(tmp_path / "n.txt"))
    assert code == 2 and "supported: .json, .npz, .onnx" in err
    assert not (tmp_path / "n.txt").exists()


@pytest.mark.parametrize(
    "content,message",
    [
        ("not json at all", "not a JSON network file"),
        ('{"format": "other", "version": 1}', "not a thresholdc network file"),
        ('{"format": "thresholdc-network", "version": 2}', "unsupported network file version 2"),
    ],
)
def test_bad_network_file_is_exit_2(tmp_path, capsys, content, message):
    src = write(tmp_path, "adder.rules", ADDER)
    net = write(tmp_path, "n.json", content)
    for argv in (["verify", net, src], ["inspect", net]):
        code, _, err = run(capsys, *argv)
        assert code == 2 and message in err.splitlines()[0]
        assert err.startswith("thresholdc: error: ")


def test_table_prints_every_row_and_json(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    code, out, _ = run(capsys, "table", src, "--json")
    t = json.loads(out)
    assert code == 0 and t["total_rows"] == 8 and len(t["rows"]) == 8
    for *x, s, c in t["rows"]:  # full adder, checked by arithmetic
        assert s == sum(x) % 2 and c == int(sum(x) >= 2)
    code, out, _ = run(capsys, "table", src, "--limit", "3")
    assert code == 0 and "(3 of 8 rows shown" in out


def test_every_command_has_help_with_an_example(capsys):
    for cmd in ("compile", "verify", "inspect", "table"):
        with pytest.raises(SystemExit) as info:
            main([cmd, "--help"])
        assert info.value.code == 0
        assert "example:" in capsys.readouterr().out


def test_entry_point_gives_no_traceback(tmp_path):
    src = write(tmp_path, "bad.rules", "input a\ny = (a and\n")
    proc = subprocess.run([sys.executable, "-m", "thresholdc", "compile", src, "-o",
                           str(tmp_path / "x.json")], capture_output=True, text=True)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert proc.stderr.startswith("thresholdc: error: ")


def test_sigmoid_with_a_tolerance_stores_and_rechecks_its_certificate(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    net = str(tmp_path / "soft.json")
    code, out, _ = run(capsys, "compile", src, "-o", net, "--activation", "sigmoid",
                       "--tolerance", "0.05")
    assert code == 0 and "certificate  tolerance 0.05" in out
    code, out, _ = run(capsys, "verify", net, src)
    assert code == 0 and "certificate: holds" in out


def test_a_gain_too_small_still_writes_the_file_and_exits_1(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    net = tmp_path / "weak.json"
    code, _, err = run(capsys, "compile", src, "-o", str(net), "--activation", "sigmoid",
                       "--gain", "0.5")
    assert code == 1 and net.exists()
    assert "enough to misread an output" in err


def test_tanh_needs_the_bipolar_encoding(tmp_path, capsys):
    src = write(tmp_path, "adder.rules", ADDER)
    code, _, err = run(capsys, "compile", src, "-o", str(tmp_path / "t.json"), "--activation",
                       "tanh")
    assert code == 2
    assert err.strip() == "thresholdc: error: --activation tanh requires --encoding bipolar"
    code, _, _ = run(capsys, "compile", src, "-o", str(tmp_path / "t.json"), "--activation",
                     "tanh", "--encoding", "bipolar")
    assert code == 0
    assert json.loads((tmp_path / "t.json").read_text())["encoding"] == "bipolar"
