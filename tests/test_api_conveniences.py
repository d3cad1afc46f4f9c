"""The Python API: paths, file names given as text, error sources, notebook displays."""

from html.parser import HTMLParser
from pathlib import Path

import pytest

import thresholdc
from thresholdc import RuleError, UsageError, compile_file, compile_rules

RULES = "input dark, motion\nlamp = dark and motion\n"


def test_a_path_is_read_and_a_file_name_string_is_refused_with_advice(tmp_path, monkeypatch):
    f = tmp_path / "lamp.rules"
    f.write_text(RULES, encoding="utf-8")
    assert compile_rules(f).output_names == ("lamp",)
    assert compile_file(f).network.output_names == ("lamp",)
    assert compile_file(str(f)).network.output_names == ("lamp",)
    monkeypatch.chdir(tmp_path)
    with pytest.raises(UsageError) as info:
        compile_rules("lamp.rules")
    message = str(info.value)
    assert "compile_file('lamp.rules')" in message and "pathlib.Path('lamp.rules')" in message
    assert "no such file" not in message
    with pytest.raises(UsageError, match="no such file"):
        compile_rules("loan.rules")
    net = compile_rules(RULES)
    with pytest.raises(UsageError, match="looks like a file name"):
        thresholdc.verify(net, "lamp.rules")
    assert thresholdc.verify(net, Path("lamp.rules")).equal


def test_errors_from_the_api_name_their_source_sensibly():
    with pytest.raises(RuleError) as info:
        compile_rules("input a\ny = a and\n")
    assert str(info.value).startswith("<rules>:2:")
    with pytest.raises(UsageError) as info:
        compile_rules(RULES, activation="tanh")  # needs the bipolar encoding
    assert not str(info.value).startswith("<input>")
    assert "tanh" in str(info.value)


class _Tags(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)


def _tags(text):
    p = _Tags()
    p.feed(text)
    return p.tags


def test_notebook_displays():
    pytest.importorskip("matplotlib")
    net = compile_rules(RULES)
    html = net._repr_html_()
    assert "table" in _tags(html) and "svg" in _tags(html)
    svg = net._repr_svg_()
    assert svg.startswith("<svg") and "lamp" in svg
    report = thresholdc.verify(net, "input dark, motion\nlamp = dark or motion\n")
    card = report._repr_html_()
    assert "different" in card and "table" in _tags(card) and "li" in _tags(card)


def test_public_figure_function():
    pytest.importorskip("matplotlib")
    from matplotlib.figure import Figure

    fig = thresholdc.figure(compile_rules(RULES), min_weight=0)
    assert isinstance(fig, Figure)
    texts = [t.get_text() for t in fig.axes[0].texts]
    assert "lamp" in texts and "dark" in texts
