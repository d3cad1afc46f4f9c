"""Hints for common mistakes: rule files, data files, unused inputs."""

import pytest

from thresholdc import DataError, RuleError, compile_file
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.syntax.parser import parse
from thresholdc.train.data import load_data


def _message(text):
    with pytest.raises(RuleError) as info:
        parse(text, "r.rules")
    return info.value


@pytest.mark.parametrize("body, column, hint", [
    ("y = a and\n    b\n", 10, "continues on the next line only while a bracket is open"),
    ("y = (a = b)\n", 8, "write 'a <-> b'"),
    ("y = a AND b\n", 7, "keywords are lower case: write 'and'"),
    ("y = NOT a\n", 9, "keywords are lower case: write 'not'"),
    ("y = a && b\n", 8, "'&&' is written 'and'"),
    ("y = a || b\n", 8, "'||' is written 'or'"),
    ("y = a and True\n", 11, "the constants are written 'true' and 'false'"),
    ("y = café and b\n", 8, "names use only ASCII letters, digits and '_' (write 'cafe' for"),
])
def test_rule_file_hints(body, column, hint):
    err = _message("input a, b, c\n" + body)
    assert hint in err.message
    assert (err.line, err.column) == (2, column)


def test_no_continuation_hint_when_the_next_line_is_a_new_statement():
    err = _message("input a, b\ny = a and\nz = b\n")
    assert err.message == "expected an expression after 'and'"


NET = Network(("soil_dry", "rain"), (Neuron("y", 1, ("soil_dry", "rain"), (1, -1), -0.5),),
              (Output("y", "y"),))


def test_semicolon_file_and_column_case_hints(tmp_path):
    p = tmp_path / "d.csv"
    p.write_text("soil_dry;rain;y\n1;0;1\n", encoding="utf-8")
    with pytest.raises(DataError) as info:
        load_data(str(p), NET)
    assert "separated by ';'" in info.value.message
    assert "write 'soil_dry,rain,y'" in info.value.message
    p.write_text("Soil_Dry,rain,y\n1,0,1\n", encoding="utf-8")
    with pytest.raises(DataError) as info:
        load_data(str(p), NET)
    assert "column 'Soil_Dry' differs from 'soil_dry' only in case" in info.value.message


def test_unused_inputs_are_reported_like_unused_definitions(tmp_path, capsys):
    from thresholdc.cli import main

    src = tmp_path / "r.rules"
    src.write_text("input a, b, c, d\noutput y\ny = a and b\nz = c\n", encoding="utf-8")
    result = compile_file(src)
    assert "unused input(s), no output reads them (kept as input units): c, d" in result.warnings
    assert result.network.inputs == ("a", "b", "c", "d")
    assert main(["compile", str(src), "-o", str(tmp_path / "n.json")]) == 0
    err = capsys.readouterr().err
    assert "thresholdc: warning: unused definition(s), not compiled: z" in err
    assert "thresholdc: warning: unused input(s)" in err
