"""Netlist line ends are those of rule files: LF, CRLF and a bare CR each end a line (and
nothing else does); error positions count lines the same way in all three."""

from __future__ import annotations

import pytest

from thresholdc.errors import RuleError
from thresholdc.syntax.importers import parse_bench, parse_blif

BENCH = "# t\nINPUT(a)\nINPUT(b)\nOUTPUT(y)\ny = NAND(a, b)\n"
BLIF = ".model m\n.inputs a b\n.outputs y\n.names a b y\n11 1\n.end\n"


@pytest.mark.parametrize("end", ["\n", "\r\n", "\r"])
def test_every_line_end_reads_alike(end):
    for parse, text in ((parse_bench, BENCH), (parse_blif, BLIF)):
        plain, other = parse(text, "t"), parse(text.replace("\n", end), "t")
        assert list(other.gates) == list(plain.gates) and other.outputs == plain.outputs
        rows = [[0, 0], [0, 1], [1, 0], [1, 1]]
        assert other.simulate(rows).tolist() == plain.simulate(rows).tolist()


@pytest.mark.parametrize("end", ["\n", "\r\n", "\r"])
def test_bench_error_positions_count_every_line_end(end):
    text = "INPUT(a)\n\nOUTPUT(y)\ny = NAND(a, zz)\n".replace("\n", end)
    with pytest.raises(RuleError) as info:
        parse_bench(text, "t.bench")
    err = info.value
    assert (err.line, err.column) == (4, 13)
    assert err.render().splitlines()[1:] == ["y = NAND(a, zz)", " " * 12 + "^"]


@pytest.mark.parametrize("end", ["\n", "\r\n", "\r"])
def test_blif_error_positions_count_every_line_end(end):
    text = ".model m\n.inputs a\n.outputs y\n.names a y\n2 1\n.end\n".replace("\n", end)
    with pytest.raises(RuleError) as info:
        parse_blif(text, "t.blif")
    assert info.value.line == 5


def test_other_unicode_line_breaks_are_not_line_ends():
    # a form feed or U+2028 is no line end: the line is one (bad) statement, named at line 2
    for ch in ("\x0c", "\x1c", "\u2028"):
        with pytest.raises(RuleError) as info:
            parse_bench(f"INPUT(a)\nOUTPUT(a){ch}INPUT(b)\n", "t.bench")
        assert info.value.line == 2, ch
