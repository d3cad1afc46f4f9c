"""Diagrams of a network (optional extra ``plot``: matplotlib, drawn with the Agg backend).

Layout rules (our own layered positions):

- columns: the input units at x = 0, layer L at x = L, the outputs at x = depth + 1;
- rows: inputs in input order; the neurons of a layer sorted by the mean row of the units they
  read (ties in file order), so links cross less; each column is centred;
- a link between adjacent columns is a straight line, a link that skips columns is a curve
  (a quadratic Bézier bowed upward) so it does not run through the neurons it passes;
- a link is blue when its weight is positive and orange, dashed, when negative; its width grows
  with |w|; its weight is written on it; a neuron's box gives its name, the definition it
  implements (``⟨origin⟩`` when that differs from its name), its bias and (if not step) its
  activation; relays are drawn light grey;
- a network of more than ``max_neurons`` neurons is drawn as one box per layer (counts by role
  and activation) with the number of links between layers, and the picture says so; weights
  are not written on links when there are more than ``max_labels`` of them, and it says so.

Output is deterministic: PNG without the software tag, SVG with a fixed hash salt, no date and
text kept as text (so an SVG can be searched for neuron names).

>>> import os, tempfile
>>> from thresholdc.ir.network import Network, Neuron, Output
>>> net = Network(("a", "b"), (Neuron("y", 1, ("a", "b"), (1, 1), -1.5, origin="y"),),
...               (Output("y", "y"),))
>>> path = os.path.join(tempfile.mkdtemp(), "y.svg")
>>> draw(net, path)
>>> "b=-1.5" in open(path, encoding="utf-8").read()
True
"""

from __future__ import annotations

import io
import math
import os
from collections.abc import Sequence
from typing import Any

import matplotlib
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure
from matplotlib.patches import PathPatch
from matplotlib.path import Path

from ..errors import UsageError
from ..ir.network import Network
from ..network import atomic_write

__all__ = ["draw", "figure", "render", "FORMATS", "MAX_NEURONS"]

FORMATS = (".png", ".svg")
MAX_NEURONS = 60
MAX_LABELS = 160
POSITIVE = "#1f5fbf"  # blue
NEGATIVE = "#d9541a"  # orange (blue/orange stay apart for colour-blind readers)
RELAY = "#9a9a9a"
GATE_FACE = "#fff7e0"
INPUT_FACE = "#e8f1e4"
OUTPUT_FACE = "#efe6f5"
EXTRA_FACE = "#eeeeee"
_STYLE = {"svg.hashsalt": "thresholdc", "svg.fonttype": "none", "font.family": "DejaVu Sans"}


def _num(x: float) -> str:
    """A weight or bias as short text: ``2``, ``-1.5``, ``9.19``."""
    x = float(x)
    if x.is_integer():
        return str(int(x))
    return f"{x:.3g}" if abs(x) < 100 else f"{x:.0f}"


def _curve(ax: Any, p0: tuple[float, float], p1: tuple[float, float], bow: float,
           **style: Any) -> tuple[float, float]:
    """Draw a quadratic Bézier from p0 to p1 bowed up by ``bow``; return its point at t=0.62."""
    (x0, y0), (x1, y1) = p0, p1
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2 + bow
    ax.add_patch(PathPatch(Path([p0, (cx, cy), p1], [Path.MOVETO, Path.CURVE3, Path.CURVE3]),
                           fill=False, **style))
    t = 0.62
    return ((1 - t) ** 2 * x0 + 2 * (1 - t) * t * cx + t * t * x1,
            (1 - t) ** 2 * y0 + 2 * (1 - t) * t * cy + t * t * y1)


def _bow(p0: tuple[float, float], p1: tuple[float, float]) -> float:
    """How far a link bows: 0 between adjacent columns, else away from the middle row."""
    span = p1[0] - p0[0]
    if span <= 1:
        return 0.0
    side = 1.0 if (p0[1] + p1[1]) / 2 >= 0 else -1.0
    return side * (0.45 * (span - 1) + 0.45)


def _columns(net: Network) -> dict[str, tuple[float, float]]:
    """Position (x, y) of every input unit and neuron (see the layout rules)."""
    pos: dict[str, tuple[float, float]] = {}
    n = len(net.inputs)
    for i, name in enumerate(net.inputs):
        pos[name] = (0.0, (n - 1) / 2 - i)
    for L in range(1, net.depth + 1):
        layer = [(k, u) for k, u in enumerate(net.neurons) if u.layer == L]

        def key(item: tuple[int, Any]) -> tuple[float, int]:
            k, u = item
            ys = [pos[i][1] for i in u.inputs if i in pos]
            return (-(sum(ys) / len(ys)) if ys else 0.0, k)

        layer.sort(key=key)
        for r, (_, u) in enumerate(layer):
            pos[u.name] = (float(L), (len(layer) - 1) / 2 - r)
    return pos


def _neuron_label(u: Any) -> str:
    """Name, definition, bias and activation of a neuron, one per line."""
    lines = [u.name]
    if u.origin and u.origin != u.name:
        lines.append(f"⟨{u.origin}⟩")
    tail = f"b={_num(u.bias)}"
    if u.activation != "step":
        tail += f"  {u.activation}"
    lines.append(tail)
    return "\n".join(lines)


def _title(net: Network) -> str:
    acts = sorted({u.activation for u in net.neurons}) or ["none"]
    return (f"{len(net.inputs)} input units · {len(net.neurons)} neurons · "
            f"{len(net.outputs)} outputs · depth {net.depth} · {', '.join(acts)}")


def _new_figure(width: float, height: float) -> tuple[Figure, Any]:
    """A figure on the Agg canvas (no pyplot state) and its single axes, axis lines off."""
    fig = Figure(figsize=(width, height), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.02, 0.07, 0.96, 0.86))
    ax.set_axis_off()
    return fig, ax


def _detailed(net: Network, max_labels: int) -> Figure:
    """Every unit and link drawn."""
    pos = _columns(net)
    depth = net.depth
    tall = max([len(net.inputs), len(net.outputs)] +
               [sum(1 for u in net.neurons if u.layer == L) for L in range(1, depth + 1)])
    fig, ax = _new_figure(max(6.0, 2.6 * (depth + 2)), max(3.5, 0.85 * tall + 1.4))
    links = [(i, u, w) for u in net.neurons for i, w in zip(u.inputs, u.weights, strict=True)
             if w != 0]
    label_links = len(links) <= max_labels
    role = {u.name: u.role for u in net.neurons}
    wmax = max([abs(w) for _, _, w in links] + [1.0])
    for src, u, w in links:
        p0, p1 = pos[src], pos[u.name]
        light = u.role == "relay" or role.get(src) == "relay"
        bow = _bow(p0, p1)
        colour = POSITIVE if w > 0 else NEGATIVE
        where = _curve(ax, p0, p1, bow, edgecolor=colour, alpha=0.35 if light else 0.9,
                       linewidth=0.8 + 2.2 * math.sqrt(abs(w) / wmax),
                       linestyle="-" if w > 0 else (0, (4, 2)), zorder=1)
        if label_links and not light:
            ax.text(*where, _num(w), fontsize=8.5, color=colour, ha="center", va="center",
                    zorder=3, bbox={"boxstyle": "round,pad=0.12", "fc": "white", "ec": "none",
                                    "alpha": 0.9})
    for name in net.inputs:
        ax.text(*pos[name], name, ha="center", va="center", fontsize=9, zorder=4,
                bbox={"boxstyle": "round,pad=0.35", "fc": INPUT_FACE, "ec": "#4d7a3a"})
    for u in net.neurons:
        relay = u.role == "relay"
        face = "#f4f4f4" if relay else EXTRA_FACE if u.role == "extra" else GATE_FACE
        ax.text(*pos[u.name], _neuron_label(u), ha="center", va="center",
                fontsize=7.5 if relay else 8.5, zorder=4, color="#777777" if relay else "black",
                bbox={"boxstyle": "round,pad=0.35", "fc": face,
                      "ec": RELAY if relay else "#8a6d1f",
                      "linestyle": "--" if relay else "-"})
    n_out = len(net.outputs)
    for k, o in enumerate(net.outputs):
        p1 = (depth + 1.0, (n_out - 1) / 2 - k)
        p0 = pos[o.source]
        _curve(ax, p0, p1, _bow(p0, p1), edgecolor="#6b4c8a",
               linewidth=1.0, linestyle=":", zorder=1)
        ax.text(*p1, o.name, ha="center", va="center", fontsize=9, zorder=4,
                fontweight="bold", bbox={"boxstyle": "round,pad=0.35", "fc": OUTPUT_FACE,
                                         "ec": "#6b4c8a"})
    ys = [p[1] for p in pos.values()] + [(n_out - 1) / 2 - k for k in range(n_out)] + [0.0]
    ax.set_xlim(-0.6, depth + 1.6)
    reach = 1.0 if depth > 1 else 0.7  # room for the links that bow around a column
    ax.set_ylim(min(ys) - reach, max(ys) + reach)
    notes = ["blue: positive weight · orange dashed: negative weight · grey: relay · "
             "b: bias · ⟨…⟩: the definition a helper neuron serves · skip links curve"]
    if not label_links:
        notes.append(f"weights not written: {len(links)} links (more than {max_labels})")
    _frame(fig, net, notes)
    return fig


def _frame(fig: Figure, net: Network, notes: Sequence[str]) -> None:
    """Title, column headings' key and notes."""
    fig.text(0.5, 0.965, _title(net), ha="center", va="center", fontsize=10)
    for k, note in enumerate(notes):
        fig.text(0.5, 0.035 - 0.025 * k + 0.012 * (len(notes) - 1), note, ha="center",
                 va="center", fontsize=8, color="#444444")


def _summary(net: Network, max_neurons: int) -> Figure:
    """One box per layer and the links between layers."""
    depth = net.depth
    fig, ax = _new_figure(max(7.0, 2.6 * (depth + 2)), 4.0)
    layer_of = {name: 0 for name in net.inputs}
    for u in net.neurons:
        layer_of[u.name] = u.layer
    counts: dict[tuple[int, int], list[int]] = {}
    for u in net.neurons:
        for i, w in zip(u.inputs, u.weights, strict=True):
            if w != 0:
                c = counts.setdefault((layer_of[i], u.layer), [0, 0])
                c[0 if w > 0 else 1] += 1
    skipped: dict[int, list[int]] = {}
    for (a, b), (pos_n, neg_n) in sorted(counts.items()):
        if b - a > 1:  # links that skip layers are counted in the reader's box
            c = skipped.setdefault(b, [0, 0])
            c[0] += pos_n
            c[1] += neg_n
            continue
        _curve(ax, (float(a), 0.0), (float(b), 0.0), 0.0, edgecolor="#555555",
               linewidth=1.0 + math.log10(pos_n + neg_n + 1), zorder=1)
        ax.text((a + b) / 2, 0.06, f"{pos_n + neg_n} links\n+{pos_n} / −{neg_n}", fontsize=7.5,
                ha="center", va="bottom", zorder=3,
                bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.9})
    for L in range(1, depth + 2):
        _curve(ax, (L - 1.0, 0.0), (float(L), 0.0), 0.0, edgecolor="#555555", linewidth=0.6,
               linestyle=":", zorder=0)

    def few(names: Sequence[str]) -> str:
        shown = ", ".join(names[:6])
        return shown + (f", … (+{len(names) - 6})" if len(names) > 6 else "")

    ax.text(0.0, 0.0, f"inputs\n{len(net.inputs)} units\n{_wrap(few(list(net.inputs)))}",
            ha="center", va="center", fontsize=8.5, zorder=4,
            bbox={"boxstyle": "round,pad=0.4", "fc": INPUT_FACE, "ec": "#4d7a3a"})
    for L, roles in net.layer_sizes().items():
        units = [u for u in net.neurons if u.layer == L]
        acts = sorted({u.activation for u in units})
        parts = [f"{roles[r]} {r}{'s' if roles[r] != 1 else ''}"
                 for r in ("gate", "relay", "extra") if roles.get(r)]
        text = f"layer {L}\n{len(units)} neurons\n" + "\n".join(parts) + f"\n{', '.join(acts)}"
        if L in skipped:
            p_n, n_n = skipped[L]
            text += f"\n+{p_n + n_n} skip links\n(+{p_n} / −{n_n})"
        ax.text(float(L), 0.0, text, ha="center", va="center", fontsize=8.5, zorder=4,
                bbox={"boxstyle": "round,pad=0.4", "fc": GATE_FACE, "ec": "#8a6d1f"})
    out_names = [o.name for o in net.outputs]
    by_layer: dict[int, int] = {}
    for o in net.outputs:
        by_layer[layer_of[o.source]] = by_layer.get(layer_of[o.source], 0) + 1
    read = ", ".join(f"L{L}: {c}" for L, c in sorted(by_layer.items(), reverse=True))
    ax.text(depth + 1.0, 0.0, f"outputs\n{len(out_names)}\n{_wrap(few(out_names))}\n"
            f"read from\n{_wrap(read)}",
            ha="center", va="center", fontsize=8.5, zorder=4, fontweight="bold",
            bbox={"boxstyle": "round,pad=0.4", "fc": OUTPUT_FACE, "ec": "#6b4c8a"})
    ax.set_xlim(-0.7, depth + 1.7)
    ax.set_ylim(-1.0, 1.0)
    _frame(fig, net, [f"summary per layer: {len(net.neurons)} neurons is more than "
                      f"max_neurons={max_neurons} (raise it, e.g. --max-neurons, to draw "
                      "every neuron)"])
    return fig


def _wrap(text: str, width: int = 22) -> str:
    """Break ``text`` at ``, `` so no line is much longer than ``width`` characters."""
    lines, line = [], ""
    for part in text.split(", "):
        add = part if not line else f"{line}, {part}"
        if line and len(add) > width:
            lines.append(line + ",")
            line = part
        else:
            line = add
    return "\n".join(lines + [line])


def figure(net: Network, *, max_neurons: int = MAX_NEURONS,
           max_labels: int = MAX_LABELS) -> Figure:
    """The diagram of ``net`` as a matplotlib Figure (Agg canvas, no pyplot state).

    Parameters
    ----------
    net : Network
    max_neurons : int
        Above this many neurons a per-layer summary is drawn instead (and the picture says so).
    max_labels : int
        Above this many links the weights are not written on them (and the picture says so).

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> [round(float(x), 2) for x in figure(net).get_size_inches()]
    [7.8, 3.5]
    """
    if max_neurons < 0:
        raise UsageError(f"max_neurons must be at least 0, got {max_neurons}")
    if len(net.neurons) > max_neurons:
        return _summary(net, max_neurons)
    return _detailed(net, max_labels)


def render(net: Network, fmt: str, *, max_neurons: int = MAX_NEURONS,
           max_labels: int = MAX_LABELS) -> bytes:
    """The diagram as ``png`` or ``svg`` bytes (deterministic)."""
    fig = figure(net, max_neurons=max_neurons, max_labels=max_labels)
    buffer = io.BytesIO()
    with matplotlib.rc_context(_STYLE):  # type: ignore[arg-type]
        if fmt == "png":
            fig.savefig(buffer, format="png", dpi=110, metadata={"Software": None})
        elif fmt == "svg":
            fig.savefig(buffer, format="svg", metadata={"Date": None, "Creator": None})
        else:
            raise UsageError(f"unknown drawing format {fmt!r}; supported: png, svg")
    return buffer.getvalue()


def draw(net: Network, path: str, *, max_neurons: int = MAX_NEURONS,
         max_labels: int = MAX_LABELS) -> None:
    """Draw ``net`` into ``path`` (``.png`` or ``.svg``, chosen by suffix; written atomically).

    Parameters
    ----------
    net : Network
    path : str
        Ends in ``.png`` or ``.svg``.
    max_neurons : int
        Above this many neurons a per-layer summary is drawn instead.
    max_labels : int
        Above this many links the weights are not written on them.

    Raises
    ------
    UsageError
        Any other suffix (the message lists the supported ones).

    >>> import os, tempfile
    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> path = os.path.join(tempfile.mkdtemp(), "n.png"); draw(net, path)
    >>> open(path, "rb").read(8) == b"\\x89PNG\\r\\n\\x1a\\n"
    True
    """
    suffix = os.path.splitext(path)[1].lower()
    if suffix not in FORMATS:
        shown = f"unknown suffix {suffix!r}" if suffix else "no suffix"
        raise UsageError(f"{shown} to draw into; supported: {', '.join(FORMATS)}", file=path)
    atomic_write(path, render(net, suffix[1:], max_neurons=max_neurons, max_labels=max_labels))
