"""Diagrams: files written, labels present, summaries for large networks, same bytes twice."""

from __future__ import annotations

import re
import struct

import pytest

from tests.export._export_nets import full_adder, random_network
from thresholdc.errors import UsageError
from thresholdc.network.soften import apply_activation

pytest.importorskip("matplotlib")
from thresholdc.export.drawing import draw, render  # noqa: E402

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"  # PNG specification, section 5.2


def png_size(data: bytes) -> tuple[int, int]:
    """Width and height from the IHDR chunk (the first chunk of every PNG file)."""
    assert data[:8] == PNG_SIGNATURE
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def svg_text(data: bytes) -> str:
    return data.decode("utf-8")


def test_small_png_is_a_real_picture(tmp_path):
    path = tmp_path / "adder.png"
    draw(full_adder(), str(path))
    data = path.read_bytes()
    width, height = png_size(data)
    assert width >= 600 and height >= 300
    assert b"matplotlib" not in data.lower()  # no software tag


def test_svg_names_every_unit_bias_and_weight(tmp_path):
    path = tmp_path / "adder.svg"
    draw(full_adder(), str(path))
    text = svg_text(path.read_bytes())
    for label in ("carry", "sum", "cin", "b=-1.5", "b=-0.5", "-2"):
        assert label in text
    assert "<dc:date>" not in text


def test_helper_neurons_show_the_definition_they_serve_and_relays_are_drawn():
    net = apply_activation(full_adder(), activation="sigmoid", layered=True)
    text = svg_text(render(net, "svg"))
    assert "relay~a~1" in text
    assert "⟨carry⟩" in text  # a relay carries carry's inputs
    assert "sigmoid" in text
    assert "#9a9a9a" in text  # the relay colour


def test_positive_and_negative_weights_get_different_colours():
    text = svg_text(render(full_adder(), "svg"))
    assert "#1f5fbf" in text and "#d9541a" in text


def test_large_network_is_summarised_and_says_so():
    net = random_network(5, n_inputs=10, n_neurons=80, max_fan_in=4)
    text = svg_text(render(net, "svg"))
    assert "summary per layer" in text
    assert "max_neurons=60" in text
    assert "layer 1" in text
    assert "n79" not in text  # single neurons are not drawn
    detailed = svg_text(render(net, "svg", max_neurons=100))
    assert "n79" in detailed and "summary per layer" not in detailed


def test_many_links_drop_weight_labels_with_a_note():
    net = random_network(6, n_inputs=8, n_neurons=30, max_fan_in=6)
    text = svg_text(render(net, "svg", max_labels=10))
    assert re.search(r"weights not written: \d+ links \(more than 10\)", text)


def test_same_network_same_bytes():
    net = full_adder()
    assert render(net, "png") == render(net, "png")
    assert render(net, "svg") == render(net, "svg")


def test_unknown_suffix_is_refused_and_nothing_is_written(tmp_path):
    with pytest.raises(UsageError, match=r"'\.jpg'.*supported: \.png, \.svg"):
        draw(full_adder(), str(tmp_path / "x.jpg"))
    assert list(tmp_path.iterdir()) == []


def test_network_without_neurons_draws():
    from thresholdc.ir.network import Network, Output

    data = render(Network(("a",), (), (Output("a", "a"),)), "png")
    assert png_size(data)[0] > 0
