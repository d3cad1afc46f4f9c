"""Contract checks of writing, reading and error lines (DESIGN.md §3, §5)."""

from __future__ import annotations

import os

import pytest

from thresholdc.cli import main

ADDER = "input a, b, cin\noutput sum, carry\nsum = a xor b xor cin\ncarry = majority(a, b, cin)\n"


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.mark.parametrize("target", ["missing_folder/n.json", "a_folder.json"])
def test_compile_to_an_unwritable_path_is_exit_2(tmp_path, capsys, target):
    # DESIGN.md §5: bad input or usage is exit 2 with one clear error, no temp file left
    src = tmp_path / "adder.rules"
    src.write_text(ADDER, encoding="utf-8")
    (tmp_path / "a_folder.json").mkdir()
    code, _, err = run(capsys, "compile", src, "-o", tmp_path / target)
    assert code == 2, err
    assert err.startswith("thresholdc: error: ") and "internal error" not in err
    assert sorted(os.listdir(tmp_path)) == ["a_folder.json", "adder.rules"]


@pytest.mark.parametrize("text", ["{\n", '{"format": "thresholdc-network",\n', "[\n\n"])
def test_a_truncated_network_file_is_exit_2(tmp_path, capsys, text):
    # DESIGN.md §5: a network file that is not JSON is exit 2 with one clear error
    net = tmp_path / "cut.json"
    net.write_text(text, encoding="utf-8")
    code, _, err = run(capsys, "inspect", net)
    assert code == 2, err
    assert err.startswith(f"thresholdc: error: {net}:") and "internal error" not in err


@pytest.mark.parametrize(
    "argv",
    [["compile", "x.rules", "-o", "x.json", "--activation", "foo"], ["verify"],
     ["table", "x.rules", "--limit", "x"], []],
)
def test_usage_errors_start_with_the_error_line(capsys, argv):
    # DESIGN.md §5: an error's first line on stderr is `thresholdc: error: …`
    with pytest.raises(SystemExit) as info:
        main(argv)
    assert info.value.code == 2
    assert capsys.readouterr().err.startswith("thresholdc: error: ")


def test_the_error_shows_exactly_the_source_line_with_tabs(tmp_path, capsys):
    # DESIGN.md §3: exactly the source line, then a caret under the column
    src = tmp_path / "tab.rules"
    src.write_text("input a\n\ty =\ta and\tb\n", encoding="utf-8")
    code, _, err = run(capsys, "compile", src, "-o", tmp_path / "x.json")
    lines = err.splitlines()
    assert code == 2 and lines[0].endswith(":2:12: unknown name 'b'")
    assert lines[1] == "\ty =\ta and\tb"
    assert lines[2] == "\t   \t     \t^"  # tabs kept, so the caret lines up at any tab width


def test_empty_network_file_shows_its_position_lines(tmp_path, capsys):
    # DESIGN.md §3: where there is a position, exactly two more lines follow
    net = tmp_path / "empty.json"
    net.write_text("", encoding="utf-8")
    code, _, err = run(capsys, "inspect", net)
    lines = err.splitlines()
    assert code == 2 and lines[0].startswith(f"thresholdc: error: {net}:1:1: ")
    assert lines[1:] == ["", "^"]


def test_huge_coefficients_are_refused_with_a_position(tmp_path, capsys):
    # DESIGN.md §3: an error names file, line and column; weights must stay exact
    src = tmp_path / "big.rules"
    src.write_text("input a, b\ny = 100000000000000000000*a - b >= 1\n", encoding="utf-8")
    code, _, err = run(capsys, "compile", src, "-o", tmp_path / "x.json")
    assert code == 2
    assert err.splitlines()[0].endswith(":2:5: coefficient 100000000000000000000 is too large "
                                        "(coefficients must be below 2^31)")
