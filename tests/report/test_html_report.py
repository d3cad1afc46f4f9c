"""The HTML report: parsed with html.parser, and rendered by a headless browser if present."""

import os
import shutil
import subprocess
from html.parser import HTMLParser

import pytest

from thresholdc import compile_rules
from thresholdc.cli import main
from thresholdc.export import save_any
from thresholdc.ir.network import Network

pytest.importorskip("matplotlib")

RULES = "input a, b, c\noutput y, z\ny = a and not b\nz = atleast(2, a, b, c)\n"
WRONG = "input a, b, c\noutput y, z\ny = a and b\nz = atleast(2, a, b, c)\n"


class _Page(HTMLParser):
    """Collects tags, headings, table cells, text and every external reference."""

    def __init__(self):
        super().__init__()
        self.tags, self.h2, self.cells, self.text, self.refs = [], [], [], [], []
        self._in = None

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        for k, v in attrs:
            if k in ("src", "href") or (k == "xlink:href" and not (v or "").startswith("#")):
                self.refs.append(v)
        self._in = tag

    def handle_endtag(self, tag):
        self._in = None

    def handle_data(self, data):
        self.text.append(data)
        if self._in == "h2" and data.strip():
            self.h2.append(data.strip())
        if self._in == "td":
            self.cells.append(data.strip())


def _parse(path):
    page = _Page()
    page.feed(path.read_text(encoding="utf-8"))
    page.close()
    return page


def _write(tmp_path, rules_text, net):
    (tmp_path / "r.rules").write_text(rules_text, encoding="utf-8")
    save_any(net, str(tmp_path / "n.json"))
    return tmp_path / "n.json", tmp_path / "r.rules"


def test_report_has_every_section_and_loads_nothing_from_outside(tmp_path, capsys):
    net_path, rules = _write(tmp_path, RULES, compile_rules(RULES))
    out = tmp_path / "report.html"
    assert main(["report", str(net_path), str(rules), "-o", str(out)]) == 0
    page = _parse(out)
    assert page.h2[:4] == ["Summary", "Layers", "Drawing", "Verification"]
    assert "svg" in page.tags and "table" in page.tags
    assert page.refs == []  # self-contained
    text = " ".join(page.text)
    assert "equal" in text
    assert page.cells[page.cells.index("y"):page.cells.index("y") + 2] == ["y", "equal"]


def test_report_of_a_different_network_lists_reduced_counterexamples(tmp_path, capsys):
    net_path, rules = _write(tmp_path, WRONG, compile_rules(RULES))
    out = tmp_path / "report.html"
    assert main(["report", str(net_path), str(rules), "-o", str(out)]) == 0
    text = "".join(_parse(out).text)
    assert "different" in text
    # y = a and not b against y = a and b: they differ exactly where a = 1
    for expected in (0, 1):  # b = 0 and b = 1 give the two directions, each listed once
        assert text.count(f"a=1 (and 2 other inputs, any value): y expected {expected}") == 1


def test_report_shows_training_and_curves(tmp_path, capsys):
    net = compile_rules(RULES, activation="sigmoid")
    meta = dict(net.meta)
    meta["training"] = {"epochs_run": 3, "loss": 0.1,
                        "history": [{"epoch": 1, "loss": 0.3}, {"epoch": 2, "loss": 0.2},
                                    {"epoch": 3, "loss": 0.1}],
                        "anchor": {"value": 0.01, "method": "cross-validation",
                                   "grid": [{"anchor": 0.0, "loss": 0.2},
                                            {"anchor": 0.01, "loss": 0.1}]}}
    trained = Network(net.inputs, net.neurons, net.outputs, meta, net.encoding)
    path = tmp_path / "t.json"
    save_any(trained, str(path))
    out = tmp_path / "t.html"
    assert main(["report", str(path), "-o", str(out)]) == 0
    page = _parse(out)
    assert "Training" in page.h2
    assert page.tags.count("svg") >= 3  # the drawing, the epoch curve, the anchor curve


def test_bad_suffix_and_bad_rules_leave_no_file(tmp_path, capsys):
    net_path, rules = _write(tmp_path, RULES, compile_rules(RULES))
    assert main(["report", str(net_path), "-o", str(tmp_path / "r.txt")]) == 2
    (tmp_path / "bad.rules").write_text("input a\ny = a and\n", encoding="utf-8")
    out = tmp_path / "x.html"
    assert main(["report", str(net_path), str(tmp_path / "bad.rules"), "-o", str(out)]) == 2
    assert not out.exists()
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".thresholdc")] == []


@pytest.mark.skipif(not os.path.exists("/usr/bin/chromium"), reason="no headless browser")
def test_report_renders_in_a_headless_browser(tmp_path, capsys):
    net_path, rules = _write(tmp_path, RULES, compile_rules(RULES))
    out = tmp_path / "report.html"
    assert main(["report", str(net_path), str(rules), "-o", str(out)]) == 0
    shot = tmp_path / "shot.png"
    profile = tmp_path / "profile"
    cmd = ["/usr/bin/chromium", "--headless", "--no-sandbox", "--disable-gpu",
           "--disable-quic", "--no-first-run", "--disable-background-networking",
           "--disable-component-update", "--disable-sync", f"--user-data-dir={profile}",
           f"--screenshot={shot}", "--window-size=1200,2400", out.as_uri()]
    subprocess.run(cmd, capture_output=True, timeout=120, check=False)
    data = shot.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"  # PNG specification, section 5.2
    import numpy as np
    from matplotlib.image import imread

    pixels = imread(str(shot))
    # the page drew something: not one flat colour
    assert np.unique(pixels.reshape(-1, pixels.shape[-1]), axis=0).shape[0] > 50
    shutil.rmtree(profile, ignore_errors=True)


def _train_cli(tmp_path, rows, seed, truth):
    """A network written by ``thresholdc train`` on rows labelled by ``truth``."""
    import numpy as np
    rules = tmp_path / "t.rules"
    rules.write_text(RULES, encoding="utf-8")
    rng = np.random.default_rng(seed)
    X = rng.integers(0, 2, size=(rows, 3))
    y = truth(X)
    y = np.where(rng.random(y.shape) < 0.05, 1 - y, y)
    lines = ["a,b,c,y,z"] + [",".join(map(str, [*x, *t])) for x, t in zip(X, y, strict=True)]
    data = tmp_path / "d.csv"
    data.write_text("\n".join(lines) + "\n", encoding="utf-8")
    out = tmp_path / "trained.json"
    assert main(["train", str(rules), str(data), "-o", str(out), "--seed", "0",
                 "--workers", "1"]) == 0
    return out, rules


def _training_part(page):
    text = "".join(page.text)
    return text[text.index("Training"):]


def test_report_of_a_network_trained_today(tmp_path, capsys):
    import json

    import numpy as np

    def truth(X):  # the data say y = a (the rules: a and not b)
        return np.column_stack([X[:, 0], (X.sum(axis=1) >= 2)]).astype(int)

    net_path, rules = _train_cli(tmp_path, 120, 0, truth)
    meta = json.loads(net_path.read_text(encoding="utf-8"))["meta"]["training"]
    out = tmp_path / "t.html"
    assert main(["report", str(net_path), str(rules), "-o", str(out)]) == 0
    page = _parse(out)
    assert "Training" in page.h2
    part = _training_part(page)
    search = meta["search"]
    # the recorded choice, every candidate's scores, the final path and the held-out errors
    assert f"{meta['epochs_run']}" in page.cells and "chosen" in page.cells
    assert page.cells.count("∞ (rules alone)") == sum(  # one candidate row per ω
        1 for s in search["scores"] if s["anchor"] is None) + (meta["anchor"] is None)
    for s in search["scores"]:
        assert f"{s['loss']:.4g}" in page.cells
    if search["rules_alone"]:
        assert "Final network: the start itself" in part
    else:
        path = ", ".join(f"λ = {g:.4g}: {n}" for g, n in zip(search["grid"],
                                                                search["path_iterations"],
                                                                strict=True))
        assert path in part
    held = meta["held_out"]
    assert f"{held['start_error']:.4g} → {held['error']:.4g}" in part
    assert "y ← column y, z ← column z" in page.cells
    assert page.tags.count("svg") >= 2  # the drawing and the held-out loss per λ and ω
    assert "No per-epoch history" not in part


def test_report_says_when_the_rules_were_kept_alone(tmp_path, capsys):
    import json

    import numpy as np

    def truth(X):  # exactly the rules
        return np.column_stack([X[:, 0] * (1 - X[:, 1]), (X.sum(axis=1) >= 2)]).astype(int)

    for seed in range(6):
        net_path, rules = _train_cli(tmp_path, 24, seed, truth)
        summary = capsys.readouterr().out
        meta = json.loads(net_path.read_text(encoding="utf-8"))["meta"]["training"]
        if meta["search"]["rules_alone"]:
            break
    else:
        pytest.fail("no seed of six kept the rules alone")
    assert meta["anchor"] is None and meta["epochs_run"] == 0
    assert "λ = ∞, rules alone, chosen by 3-fold cross-validation" in summary
    assert "kept         iteration 0 of 0 (the start: rules alone)" in summary
    out = tmp_path / "t.html"
    assert main(["report", str(net_path), str(rules), "-o", str(out)]) == 0
    page = _parse(out)
    part = _training_part(page)
    assert "the rules alone (the untrained start)" in part
    assert "Final network: the start itself, untrained." in part
    i = page.cells.index("anchor λ")
    assert page.cells[i + 1] == "∞ (rules alone)"
    chosen = page.cells.index("chosen")
    assert page.cells[chosen - 5] == "∞ (rules alone)"  # the chosen candidate's row
