"""Reading data files: features to units, labels, and the exact error messages."""

import json

import pytest

from thresholdc.cli import main
from thresholdc.errors import DataError, UsageError
from thresholdc.export import save_any
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.train.data import load_data, parse_label_specs, read_table

AND = Network(
    ("a", "b"),
    (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
    (Output("y", "y"),),
)

TYPED = Network(
    ("colour=red", "colour=green", "colour=blue", "temp", "door"),
    (Neuron("warm", 1, ("temp",), (1,), -20.0, origin="warm"),),
    (Output("warm", "warm"),),
    features=(
        {"name": "colour", "kind": "categorical", "values": ["red", "green", "blue"],
         "units": ["colour=red", "colour=green", "colour=blue"]},
        {"name": "temp", "kind": "real", "units": ["temp"], "range": None, "scale": 1},
        {"name": "door", "kind": "bool", "units": ["door"]},
    ),
)


def _write(tmp_path, text, name="d.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return str(path)


def _error(path, net=AND, **kw):
    with pytest.raises(DataError) as info:
        load_data(path, net, **kw)
    return info.value


def test_booleans_any_case_trimmed_and_columns_by_name(tmp_path):
    p = _write(tmp_path, "y, b ,a,unused\n1,1,1,x\n0, False ,TRUE,y\n0,0,0,z\n0,true,0,\n")
    d = load_data(p, AND)
    assert d.X.tolist() == [[1, 1], [1, 0], [0, 0], [0, 1]]
    assert d.y.tolist() == [[1], [0], [0], [0]]
    assert d.outputs == ("y",) and d.columns == ("y",)
    assert d.lines.tolist() == [2, 3, 4, 5]


def test_any_suffix_and_blank_lines_keep_physical_line_numbers(tmp_path):
    p = _write(tmp_path, "a,b\n\n1,0\n\n\n0,2\n", name="data.txt")
    err = _error(p)
    assert str(err) == f"{p}:6: column 'b': expected 0/1 or true/false, got '2'"


def test_quoted_field_spanning_lines_counts_lines(tmp_path):
    p = _write(tmp_path, 'a,b,note\n1,1,"two\nlines"\n1,x,ok\n')
    assert _error(p).line == 4


def test_empty_file(tmp_path):
    for text in ("", "\n\n  \n"):
        err = _error(_write(tmp_path, text))
        assert (err.line, err.message) == (1, "empty file")


def test_header_alone(tmp_path):
    err = _error(_write(tmp_path, "a,b,y\n"))
    assert (err.line, err.message) == (2, "no data rows")
    assert err.render().startswith(f"thresholdc: error: {tmp_path / 'd.csv'}:2: no data rows")


def test_missing_column_is_line_1(tmp_path):
    err = _error(_write(tmp_path, "a,c\n1,0\n"))
    assert err.line == 1
    assert err.message == "missing column 'b' for the network's input (columns: a, c)"


def test_ragged_row(tmp_path):
    err = _error(_write(tmp_path, "a,b\n1,0\n1,0,1\n"))
    assert (err.line, err.message) == (3, "row has 3 fields but the header has 2")


def test_duplicate_header(tmp_path):
    err = _error(_write(tmp_path, "a,b,a\n1,0,1\n"))
    assert (err.line, err.message) == (1, "column 'a' appears twice in the header")


def test_missing_file(tmp_path):
    err = _error(str(tmp_path / "nope.csv"))
    assert err.message == "no such file" and err.line is None


def test_not_utf8(tmp_path):
    path = tmp_path / "bin.csv"
    path.write_bytes(b"a,b\n1,0\n\xff\xfe,1\n")
    err = _error(str(path))
    assert (err.line, err.message) == (3, "not UTF-8 text")


def test_categorical_real_and_bool_features(tmp_path):
    p = _write(tmp_path, "door,temp,colour\n1, 21.5 ,green\nfalse,-3,blue\n0,1e1, red\n")
    d = load_data(p, TYPED)
    assert d.X.tolist() == [
        [0, 1, 0, 21.5, 1],
        [0, 0, 1, -3.0, 0],
        [1, 0, 0, 10.0, 0],
    ]
    assert d.outputs == ()


def test_unknown_category(tmp_path):
    p = _write(tmp_path, "door,temp,colour\n1,2,green\n1,2,Red\n")
    err = _error(p, TYPED)
    assert err.line == 3
    assert err.message == "column 'colour': unknown category 'Red' (known: red, green, blue)"


def test_non_numeric_real(tmp_path):
    p = _write(tmp_path, "door,temp,colour\n1,2,green\n1,2,red\n1,warm,red\n1,cold,red\n")
    err = _error(p, TYPED)
    assert (err.line, err.message) == (4, "column 'temp': expected a number, got 'warm'")
    p = _write(tmp_path, "door,temp,colour\n1,,green\n")
    assert _error(p, TYPED).message == "column 'temp': expected a number, got an empty cell"
    p = _write(tmp_path, "door,temp,colour\n1,1,green\n1,nan,green\n")
    err = _error(p, TYPED)
    assert (err.line, err.message) == (3, "column 'temp': expected a finite number, got 'nan'")


def test_labels_mapped_and_positive_value(tmp_path):
    p = _write(tmp_path, "a,b,ok\n1,1,yes\n1,0,no\n0,0, yes \n")
    d = load_data(p, AND, labels={"y": "ok"}, positive="yes")
    assert d.y.ravel().tolist() == [1, 0, 1]
    assert d.columns == ("ok",)
    err = _error(p, labels={"y": "ok"})
    assert err.line == 2
    assert err.message.startswith("label column 'ok' (output 'y'): expected 0/1 or true/false")
    assert "--positive" in err.message


def test_explicit_label_overrides_same_named_column(tmp_path):
    p = _write(tmp_path, "a,b,y,z\n1,1,0,1\n")
    assert load_data(p, AND, labels={"y": "z"}).y.tolist() == [[1]]


def test_label_errors(tmp_path):
    p = _write(tmp_path, "a,b\n1,1\n")
    err = _error(p, labels={"y": "want"})
    assert err.line == 1 and err.message.startswith("missing label column 'want' for output 'y'")
    with pytest.raises(UsageError, match="unknown output 'q'"):
        load_data(p, AND, labels={"q": "a"})
    with pytest.raises(UsageError, match="no labels"):
        load_data(p, AND, require_labels=True)
    with pytest.raises(UsageError, match="OUTPUT=COLUMN"):
        parse_label_specs(["y"])
    with pytest.raises(UsageError, match="twice"):
        parse_label_specs(["y=a", "y=b"])


def test_bipolar_network_reads_booleans_as_plus_minus_one(tmp_path):
    bip = Network(AND.inputs, AND.neurons, AND.outputs, encoding="bipolar")
    p = _write(tmp_path, "a,b,y\n1,0,0\n")
    d = load_data(p, bip)
    assert d.X.tolist() == [[1, -1]] and d.y.tolist() == [[0]]


def test_read_table_trims_and_hashes(tmp_path):
    p = _write(tmp_path, "\ufeff x , y \n 1 , 2 \n")
    t = read_table(p)
    assert t.header == ("x", "y") and t.cells.tolist() == [["1", "2"]]
    import hashlib

    assert t.sha256 == hashlib.sha256(b" x , y \n 1 , 2 \n").hexdigest()


# ------------------------------------------------------------------ the score command
def test_score_json_exact_layout(tmp_path, capsys):
    net_path = tmp_path / "and.json"
    save_any(AND, str(net_path))
    # AND is true only on row 4; labels are wrong on rows 2 and 4 by construction.
    p = _write(tmp_path, "a,b,truth\n0,0,0\n0,1,1\n1,0,0\n1,1,0\n1,1,1\n")
    code = main(["score", str(net_path), p, "--label", "y=truth", "--json"])
    assert code == 0
    assert json.loads(capsys.readouterr().out) == {
        "rows": 5,
        "outputs": [{"name": "y", "column": "truth", "accuracy": 0.6, "errors": 2,
                     "positives": 2, "precision": 0.5, "recall": 0.5, "f1": 0.5,
                     "confusion": {"tp": 1, "fp": 1, "fn": 1, "tn": 2}}],
    }


def test_score_lists_only_labelled_outputs_in_network_order(tmp_path, capsys):
    two = Network(
        ("a", "b"),
        (Neuron("y", 1, ("a", "b"), (1, 1), -1.5), Neuron("z", 1, ("a", "b"), (1, 1), -0.5)),
        (Output("z", "z"), Output("y", "y"), Output("w", "a")),
    )
    net_path = tmp_path / "two.json"
    save_any(two, str(net_path))
    p = _write(tmp_path, "a,b,y,zz\n0,1,T,T\n1,1,T,T\n")
    code = main(["score", str(net_path), p, "--label", "z=zz", "--positive", "T", "--json"])
    out = json.loads(capsys.readouterr().out)
    assert code == 0
    assert [o["name"] for o in out["outputs"]] == ["z", "y"]
    assert [o["errors"] for o in out["outputs"]] == [0, 1]  # y is false on (0, 1)
    assert out["outputs"][1]["accuracy"] == 0.5


def test_score_text_and_errors(tmp_path, capsys):
    net_path = tmp_path / "and.json"
    save_any(AND, str(net_path))
    p = _write(tmp_path, "a,b,y\n1,1,1\n")
    assert main(["score", str(net_path), p]) == 0
    text = capsys.readouterr().out
    assert "1 row\n" in text and "1.0000" in text
    # no label at all: exit 2
    p = _write(tmp_path, "a,b\n1,1\n")
    assert main(["score", str(net_path), p]) == 2
    assert capsys.readouterr().err.startswith("thresholdc: error: ")
    # a bad value: DATA:LINE: message on the first stderr line
    p = _write(tmp_path, "a,b,y\n1,1,1\n1,yes,0\n")
    assert main(["score", str(net_path), p]) == 2
    first = capsys.readouterr().err.splitlines()[0]
    assert first == f"thresholdc: error: {p}:3: column 'b': expected 0/1 or true/false, got 'yes'"
    p = _write(tmp_path, "")
    assert main(["score", str(net_path), p]) == 2
    assert capsys.readouterr().err.splitlines()[0] == f"thresholdc: error: {p}:1: empty file"
