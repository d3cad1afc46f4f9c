"""Rows of a data file end only at LF, CRLF or a bare CR, as the csv module reads a file
opened with ``newline=""`` (the second reader of every table here); form feed, \\x1c-\\x1e,
NEL and U+2028 inside a row stay in their cell."""

from __future__ import annotations

import csv

import pytest

from thresholdc.errors import DataError
from thresholdc.training.data import read_table

# characters str.splitlines would end a line at, and the csv module does not
NOT_LINE_ENDS = ["\x0b", "\x0c", "\x1c", "\x1d", "\x1e", "\x85", "\u2028", "\u2029"]


def _csv_rows(path):
    # the second reader: the csv module on the file itself (blank rows dropped, cells trimmed)
    with open(path, encoding="utf-8", newline="") as fh:
        rows = [[c.strip() for c in r] for r in csv.reader(fh) if r]
    return rows[0], rows[1:]


@pytest.mark.parametrize("inside", NOT_LINE_ENDS)
@pytest.mark.parametrize("end", ["\n", "\r\n", "\r"])
def test_rows_end_where_the_csv_module_ends_them(tmp_path, inside, end):
    path = tmp_path / "d.csv"
    text = end.join(["a,b,c", f"x{inside}y,1,2", f'"q{inside}",3,4{inside}z', "5,6,7"]) + end
    path.write_bytes(text.encode("utf-8"))
    table = read_table(str(path))
    header, rows = _csv_rows(path)
    assert table.header == tuple(header) == ("a", "b", "c")
    assert table.cells.tolist() == rows
    assert table.rows == 3 and table.lines.tolist() == [2, 3, 4]
    assert table.cells[0, 0] == f"x{inside}y"


@pytest.mark.parametrize("end", ["\n", "\r\n", "\r"])
def test_error_lines_count_every_line_end(tmp_path, end):
    path = tmp_path / "d.csv"
    path.write_bytes(end.join(["a,b", "1\x1c,2", "", "1,2,3"]).encode() + end.encode())
    with pytest.raises(DataError) as info:
        read_table(str(path))
    assert (info.value.line, info.value.message) == (4, "row has 3 fields but the header has 2")


def test_a_quoted_line_end_stays_in_its_cell_and_lines_go_on_counting(tmp_path):
    path = tmp_path / "d.csv"
    good = b'a,b\r"one\rtwo",1\r\n"x\r\ny",2\r'
    path.write_bytes(good)
    table = read_table(str(path))
    assert table.cells.tolist() == [["one\rtwo", "1"], ["x\r\ny", "2"]] == _csv_rows(path)[1]
    assert table.lines.tolist() == [2, 4]  # a row's line is the line it starts on
    path.write_bytes(good + b"3\n")  # a row of one field on line 6
    with pytest.raises(DataError) as info:
        read_table(str(path))
    assert (info.value.line, info.value.message) == (6, "row has 1 field but the header has 2")


@pytest.mark.parametrize("chunk", [1, 2, 3, 1000])
def test_a_ragged_row_in_a_later_chunk_is_named_by_its_own_line(tmp_path, monkeypatch, chunk):
    # found by benchmarks/fuzz_campaign.py --seed 10: a bad row in the 16th chunk of 65,536
    # rows was reported at the line of the row with its index within the chunk
    from thresholdc.training import data

    monkeypatch.setattr(data, "_CHUNK_ROWS", chunk)
    path = tmp_path / "d.csv"
    path.write_text("a,b\n" + "1,2\n" * 5 + "\n1,2,3\n" + "1,2\n", encoding="utf-8")
    with pytest.raises(DataError) as info:
        read_table(str(path))
    assert (info.value.line, info.value.message) == (8, "row has 3 fields but the header has 2")
