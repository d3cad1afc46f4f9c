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
    assert "#a0a0a0" in text  # the relay colour


def test_positive_and_negative_weights_get_different_colours_and_styles():
    text = svg_text(render(full_adder(), "svg"))
    # Okabe & Ito (2008) bluish green and reddish purple
    assert "#009e73" in text.lower() and "#cc79a7" in text.lower()
    assert "#1f5fbf" not in text and "#d9541a" not in text  # not the old blue/orange code
    assert "stroke-dasharray" in text  # negative links are dashed


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


# ---- our own style: label placement, cut-off, wrapping summaries, plurals ----------------
def _weight_label_boxes(fig):
    """Window extents of every text drawn in a white box edged in a link colour."""
    renderer = fig.canvas.get_renderer()
    boxes = []
    for t in fig.axes[0].texts:
        patch = t.get_bbox_patch()
        if patch is not None and patch.get_facecolor()[:3] == (1.0, 1.0, 1.0):
            boxes.append(t.get_window_extent(renderer))
    return boxes


def test_weight_labels_never_overlap_each_other():
    from thresholdc.export.drawing import figure

    for seed in range(4):
        net = random_network(seed, n_inputs=6, n_neurons=12, max_fan_in=4)
        boxes = _weight_label_boxes(figure(net))
        assert boxes
        for i, a in enumerate(boxes):
            for b in boxes[i + 1:]:
                assert not a.overlaps(b), (seed, a, b)


def test_a_label_with_no_free_place_goes_to_the_side_table(monkeypatch):
    from thresholdc.export import drawing
    from thresholdc.ir.network import Network, Neuron, Output

    # a -> lower neuron and b -> upper neuron cross at their midpoints; with only the midpoint
    # allowed, one of the two labels cannot be placed on its link.
    monkeypatch.setattr(drawing, "_STAGGER", (0.5,))
    net = Network(("a", "b"), (Neuron("u", 1, ("a", "b"), (1, 3), -0.5),
                               Neuron("v", 1, ("a", "b"), (5, 7), -0.5)),
                  (Output("u", "u"), Output("v", "v")))
    fig = drawing.figure(net)
    placed = len(_weight_label_boxes(fig))
    texts = " ".join(t.get_text() for t in fig.texts)
    assert placed == 3
    assert "1 weight with no free place" in texts
    assert texts.count(" → ") == 1


def test_small_weights_are_hidden_and_the_legend_says_so():
    from thresholdc.ir.network import Network, Neuron, Output

    net = Network(("a", "b", "c"), (Neuron("y", 1, ("a", "b", "c"), (3.2, -0.013, 0.02),
                                           -1.1, activation="sigmoid"),), (Output("y", "y"),))
    text = svg_text(render(net, "svg"))
    assert "2 links with |w| &lt; 0.32 hidden (of 3" in text
    assert "1 link with |w| &lt; 0.015 hidden" in svg_text(render(net, "svg", min_weight=0.015))
    assert "hidden" not in svg_text(render(net, "svg", min_weight=0))


def test_deep_summary_wraps_onto_rows():
    from thresholdc.ir.network import Network, Neuron, Output

    neurons = [Neuron("n1", 1, ("a",), (1,), -0.5)]
    for k in range(2, 61):
        neurons.append(Neuron(f"n{k}", k, (f"n{k - 1}",), (1,), -0.5))
    net = Network(("a",), tuple(neurons), (Output("y", "n60"),))
    width, height = png_size(render(net, "png"))
    assert width <= 2400 and height <= 2600  # not a 17,732 px strip
    text = svg_text(render(net, "svg"))
    assert "layer 60" in text and "1 neuron" in text and "1 neurons" not in text
    assert "in: 1 link" in text and "depth 60 is more than" in text
    assert "1 links" not in text


def test_singular_in_the_title():
    from thresholdc.ir.network import Network, Neuron, Output

    net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    text = svg_text(render(net, "svg"))
    assert "1 input unit · 1 neuron · 1 output" in text
