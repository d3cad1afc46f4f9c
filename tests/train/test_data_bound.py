"""The data bound: a data file over it is refused with the bound and the option that raises it
(--max-data-gb), before the work it bounds; within it the same file reads as before."""

from __future__ import annotations

import pytest

from thresholdc.cli import main
from thresholdc.errors import DataError
from thresholdc.export import save_any
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.training.data import load_data, read_table

AND = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
              (Output("y", "y"),))
TEXT = "a,b,y\n" + "1,1,1\n0,1,0\n" * 50  # 101 lines × 3 columns, cells of one character


def _refused(path, max_bytes, net=AND):
    with pytest.raises(DataError) as info:
        load_data(path, net, max_bytes=max_bytes)
    assert "over the data bound of" in info.value.message
    assert info.value.message.endswith("(raise it with --max-data-gb G)")
    return info.value


def test_each_part_of_the_bound(tmp_path):
    path = tmp_path / "d.csv"
    path.write_text(TEXT, encoding="utf-8")
    # the file: 606 bytes; its cells: 101 lines × 3 columns × 4 bytes = 1,212 bytes at one
    # character each; its input units: 100 rows × 2 units × 8 bytes = 1,600 bytes
    assert load_data(str(path), AND, max_bytes=1600).rows == 100  # at the bound: read
    err = _refused(str(path), 1599)
    assert "100 rows × 2 input units" in err.message
    assert read_table(str(path), 1212).rows == 100
    err = _refused(str(path), 1211)  # before any row is read
    assert "101 lines × 3 columns" in err.message and err.line == 1
    err = _refused(str(path), 605)  # before the file is read
    assert err.line is None and "the file's 606 bytes" in err.message


def test_a_long_cell_is_refused_at_its_line(tmp_path):
    path = tmp_path / "d.csv"
    # 102 lines × 3 columns: 10,000 bytes allow cells of up to 10000 // 1224 = 8 characters
    path.write_text(TEXT.replace("0,1,0\n", "0,1,0 \n", 1) + "1,1,1" + " " * 8 + "\n",
                    encoding="utf-8")
    with pytest.raises(DataError) as info:
        read_table(str(path), 10_000)
    assert info.value.line == 102
    assert "with cells as long as this one (over 8 characters)" in info.value.message
    assert read_table(str(path), 20_000).cells[-1].tolist() == ["1", "1", "1"]


def test_the_command_line_names_the_option_and_raises_the_bound(tmp_path, capsys):
    net = tmp_path / "n.json"
    save_any(AND, str(net))
    path = tmp_path / "d.csv"
    path.write_text(TEXT, encoding="utf-8")
    assert main(["score", str(net), str(path), "--max-data-gb", "1e-7"]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"thresholdc: error: {path}: the file's 606 bytes take about")
    assert err.rstrip().endswith("(raise it with --max-data-gb G)") and err.count("\n") == 1
    assert main(["score", str(net), str(path), "--max-data-gb", "1e-5", "--json"]) == 0
    with pytest.raises(SystemExit) as info:
        main(["train", str(net), str(path), "-o", str(tmp_path / "t.json"),
              "--max-data-gb", "0"])
    assert info.value.code == 2
    assert "expected a positive number of gigabytes" in capsys.readouterr().err
    assert not (tmp_path / "t.json").exists()
