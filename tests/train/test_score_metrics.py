"""score: precision, recall, F1, confusion counts and the misclassified rows."""

import csv
import json
import os

import numpy as np

from thresholdc.cli import main
from thresholdc.export import save_any
from thresholdc.ir.network import Network, Neuron, Output
from thresholdc.train.data import Dataset
from thresholdc.train.scoring import score

OR = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -0.5, origin="y"),),
             (Output("y", "y"),))


def _confusion_by_counting(pred, truth):
    """Textbook definitions, counted one row at a time (a second, independent count)."""
    tp = sum(1 for p, t in zip(pred, truth) if p and t)
    fp = sum(1 for p, t in zip(pred, truth) if p and not t)
    fn = sum(1 for p, t in zip(pred, truth) if not p and t)
    tn = sum(1 for p, t in zip(pred, truth) if not p and not t)
    return tp, fp, fn, tn


def test_metrics_match_the_textbook_definitions_on_random_labels():
    rng = np.random.default_rng(7)
    X = rng.integers(0, 2, size=(200, 2)).astype(float)
    y = rng.integers(0, 2, size=(200, 1)).astype(float)
    d = Dataset("d.csv", X, y, ("y",), ("y",), np.arange(2, 202))
    out = score(OR, d)["outputs"][0]
    pred = [bool(a or b) for a, b in X.tolist()]
    tp, fp, fn, tn = _confusion_by_counting(pred, [bool(t) for t in y[:, 0]])
    assert out["confusion"] == {"tp": tp, "fp": fp, "fn": fn, "tn": tn}
    assert out["errors"] == fp + fn and out["positives"] == tp + fn
    # precision, recall, F1 as usually defined (common practice)
    p, r = tp / (tp + fp), tp / (tp + fn)
    assert np.isclose(out["precision"], p) and np.isclose(out["recall"], r)
    assert np.isclose(out["f1"], 2 * p * r / (p + r))


def test_errors_file_holds_exactly_the_misclassified_rows(tmp_path, capsys):
    net_path = tmp_path / "or.json"
    save_any(OR, str(net_path))
    data = tmp_path / "d.csv"
    data.write_text("a,b,note,y\n0,0,first,0\n0,1,second,0\n\n1,1,third,1\n0,0,fourth,1\n",
                    encoding="utf-8")
    wrong = tmp_path / "wrong.csv"
    code = main(["score", str(net_path), str(data), "--errors", str(wrong), "--json"])
    result = json.loads(capsys.readouterr().out)
    assert code == 0
    assert result["outputs"][0]["confusion"] == {"tp": 1, "fp": 1, "fn": 1, "tn": 1}
    rows = list(csv.reader(wrong.open(encoding="utf-8")))
    assert rows[0] == ["line", "a", "b", "note", "y", "wrong", "network:y"]
    assert rows[1:] == [["3", "0", "1", "second", "0", "y", "1"],
                        ["6", "0", "0", "fourth", "1", "y", "0"]]
    assert result["errors_file"]["rows"] == 2


def test_errors_file_not_written_on_bad_data(tmp_path, capsys):
    net_path = tmp_path / "or.json"
    save_any(OR, str(net_path))
    data = tmp_path / "d.csv"
    data.write_text("a,b,y\n0,2,0\n", encoding="utf-8")
    wrong = tmp_path / "wrong.csv"
    assert main(["score", str(net_path), str(data), "--errors", str(wrong)]) == 2
    assert not os.path.exists(wrong)
    assert sorted(os.listdir(tmp_path)) == ["d.csv", "or.json"]
    assert "d.csv:2:" in capsys.readouterr().err


def test_text_shows_the_new_columns_and_a_dash_for_no_positives(tmp_path, capsys):
    net_path = tmp_path / "or.json"
    save_any(OR, str(net_path))
    data = tmp_path / "d.csv"
    data.write_text("a,b,y\n0,0,0\n", encoding="utf-8")
    assert main(["score", str(net_path), str(data)]) == 0
    text = capsys.readouterr().out
    assert "1 row\n" in text
    header = text.splitlines()[1].split()
    assert header[:8] == ["output", "column", "accuracy", "errors", "positives", "precision",
                          "recall", "F1"]
    last = text.splitlines()[-1].split()
    assert last[5:8] == ["-", "-", "-"] and last[-4:] == ["0", "0", "0", "1"]
