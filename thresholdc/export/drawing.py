"""Diagrams of a network (optional extra ``plot``: matplotlib, drawn with the Agg backend).

Our own layered layout and style:

- columns: the input units at x = 0, layer L at x = L, the outputs at x = depth + 1; rows:
  inputs in input order, the neurons of a layer sorted by the mean row of the units they read
  (ties in file order), so links cross less; each column is centred;
- a link between adjacent columns is a straight line, a link that skips columns a curve bowed
  away from the middle row, so it does not run through the neurons it passes;
- sign is shown twice, by colour and by line style: positive weights solid bluish green,
  negative weights dashed reddish purple (two colours of the Okabe & Ito (2008) palette for
  colour-blind readers, "Color Universal Design", chosen for this program); width grows
  with |w|; relays are light grey;
- a link's weight is written in a small box on the link, at the first of several staggered
  positions along it where the box overlaps no other label and no neuron; a weight that finds
  no free place goes into a side table instead (the picture says so); soft neurons compiled
  with a gain show their integer weights and the gain (:func:`thresholdc.present.degain`);
- links with |w| below a cut-off are hidden, and the legend says how many (the default
  cut-off is 0 for networks of integer weights, else a tenth of the largest |w|);
- a network of more than ``max_neurons`` neurons (or deeper than ``MAX_DEPTH``) is drawn as
  one box per layer (counts by
  role and activation, links into the layer by sign), several boxes per row, wrapping onto
  further rows, and the picture says so.

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
from matplotlib.lines import Line2D
from matplotlib.patches import FancyArrowPatch, PathPatch
from matplotlib.path import Path

from ..errors import UsageError
from ..ir.network import Network
from ..network import atomic_write
from ..present import count, degain

__all__ = ["draw", "figure", "render", "weight_cutoff", "FORMATS", "MAX_NEURONS"]

FORMATS = (".png", ".svg")
MAX_NEURONS = 60
MAX_LABELS = 160
MAX_DEPTH = 14  # deeper networks are summarised too (a detailed picture would be a strip)
PER_ROW = 5  # layer boxes per row of a summary (up to 8 for deep networks)
SIDE_ROWS = 24  # entries of the side table of unplaced weights
# Okabe & Ito (2008), "Color Universal Design": bluish green and reddish purple.
POSITIVE = "#009E73"
NEGATIVE = "#CC79A7"
POSITIVE_STYLE: Any = "-"
NEGATIVE_STYLE: Any = (0, (5, 2.5))
RELAY = "#a0a0a0"
GATE_FACE = "#f3f0e6"
GATE_EDGE = "#6e6650"
INPUT_FACE = "#e6eef5"
INPUT_EDGE = "#4a6a85"
OUTPUT_FACE = "#f7ecd9"
OUTPUT_EDGE = "#8a6a2e"
EXTRA_FACE = "#eeeeee"
_STYLE = {"svg.hashsalt": "thresholdc", "svg.fonttype": "none", "font.family": "DejaVu Sans"}
_FONT = 8.5  # points
_CHAR = 0.60  # average character width of DejaVu Sans, in ems  # common practice
_STAGGER = (0.5, 0.36, 0.64, 0.26, 0.74, 0.18, 0.82, 0.43, 0.57)


def _num(x: float) -> str:
    """A weight or bias as short text: ``2``, ``-1.5``, ``9.19``."""
    x = float(x)
    if x.is_integer():
        return str(int(x))
    return f"{x:.3g}" if abs(x) < 100 else f"{x:.0f}"


def _bezier(p0: tuple[float, float], p1: tuple[float, float], bow: float, t: float
            ) -> tuple[float, float]:
    """The point at ``t`` of the quadratic Bézier from p0 to p1 bowed by ``bow``."""
    (x0, y0), (x1, y1) = p0, p1
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2 + bow
    return ((1 - t) ** 2 * x0 + 2 * (1 - t) * t * cx + t * t * x1,
            (1 - t) ** 2 * y0 + 2 * (1 - t) * t * cy + t * t * y1)


def _curve(ax: Any, p0: tuple[float, float], p1: tuple[float, float], bow: float,
           **style: Any) -> None:
    """Draw a quadratic Bézier from p0 to p1 bowed up by ``bow``."""
    (x0, y0), (x1, y1) = p0, p1
    cx, cy = (x0 + x1) / 2, (y0 + y1) / 2 + bow
    ax.add_patch(PathPatch(Path([p0, (cx, cy), p1], [Path.MOVETO, Path.CURVE3, Path.CURVE3]),
                           fill=False, **style))


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


def _neuron_label(u: Any, gain: float | None) -> str:
    """Name, definition, bias and activation of a neuron, one per line."""
    lines = [u.name]
    if u.origin and u.origin != u.name:
        lines.append(f"⟨{u.origin}⟩")
    bias = round(2 * u.bias / gain) / 2 if gain else u.bias
    tail = f"b={_num(bias)}"
    if u.activation != "step":
        tail += f"  {u.activation}" + (f" ×{gain:.3g}" if gain else "")
    lines.append(tail)
    return "\n".join(lines)


def _title(net: Network) -> str:
    acts = sorted({u.activation for u in net.neurons}) or ["no neurons"]
    return (f"{count(len(net.inputs), 'input unit')} · {count(len(net.neurons), 'neuron')} · "
            f"{count(len(net.outputs), 'output')} · depth {net.depth} · {', '.join(acts)}")


def _shown_weights(net: Network) -> tuple[list[tuple[str, Any, float]], dict[str, float]]:
    """Every non-zero link as (source, neuron, shown weight) and the gains taken out."""
    gains = degain(net)
    links = []
    for u in net.neurons:
        g = gains.get(u.name)
        for i, w in zip(u.inputs, u.weights, strict=True):
            if w != 0:
                links.append((i, u, round(w / g) if g else float(w)))
    return links, gains


def weight_cutoff(net: Network) -> float:
    """The default cut-off below which links are hidden: 0 when every shown weight is an
    integer (compiled networks), else a tenth of the largest |weight| (trained ones).

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> n = Neuron("y", 1, ("a", "b"), (4.0, 0.013), 0.0, activation="sigmoid")
    >>> weight_cutoff(Network(("a", "b"), (n,), (Output("y", "y"),)))
    0.4
    """
    links, _ = _shown_weights(net)
    if all(float(w).is_integer() for _, _, w in links):
        return 0.0
    return round(0.1 * max(abs(w) for _, _, w in links), 3)


class _Placer:
    """Boxes already taken on the canvas, in inches, and a test for a new one."""

    def __init__(self, sx: float, sy: float) -> None:
        self.sx, self.sy = sx, sy
        self.boxes: list[tuple[float, float, float, float]] = []

    def box(self, x: float, y: float, text: str, size: float, pad: float) -> tuple:
        lines = text.split("\n")
        w = max(len(s) for s in lines) * _CHAR * size / 72 + 2 * pad
        h = len(lines) * 1.25 * size / 72 + 2 * pad
        cx, cy = x * self.sx, y * self.sy
        return (cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2)

    def free(self, b: tuple) -> bool:
        return all(b[2] <= o[0] or o[2] <= b[0] or b[3] <= o[1] or o[3] <= b[1]
                   for o in self.boxes)

    def take(self, b: tuple) -> None:
        self.boxes.append(b)


def _legend(fig: Figure, notes: Sequence[str], *, signs: bool) -> None:
    """A line-sample legend for the two signs and the relays, then the notes."""
    if signs:
        handles = [
            Line2D([], [], color=POSITIVE, linestyle=POSITIVE_STYLE, linewidth=2.2,
                   label="positive weight (solid)"),
            Line2D([], [], color=NEGATIVE, linestyle=NEGATIVE_STYLE, linewidth=2.2,
                   label="negative weight (dashed)"),
            Line2D([], [], color=RELAY, linewidth=1.5, label="relay (carries a value)"),
        ]
        fig.legend(handles=handles, loc="lower center", ncol=3, fontsize=8, frameon=False,
                   bbox_to_anchor=(0.5, 0.0 + 0.028 * len(notes)))
    for k, note in enumerate(notes):
        fig.text(0.5, 0.018 + 0.028 * (len(notes) - 1 - k), note, ha="center", va="center",
                 fontsize=7.8, color="#333333")


def _detailed(net: Network, max_labels: int, cutoff: float) -> Figure:
    """Every unit and link drawn (links under the cut-off hidden)."""
    pos = _columns(net)
    depth = net.depth
    tall = max([len(net.inputs), len(net.outputs)] +
               [sum(1 for u in net.neurons if u.layer == L) for L in range(1, depth + 1)])
    every, gains = _shown_weights(net)
    links = [lk for lk in every if abs(lk[2]) >= cutoff]
    hidden = len(every) - len(links)
    label_links = len(links) <= max_labels
    width = max(6.5, 2.7 * (depth + 2))
    height = max(3.8, 0.9 * tall + 1.9)
    n_out = len(net.outputs)
    ys = [p[1] for p in pos.values()] + [(n_out - 1) / 2 - k for k in range(n_out)] + [0.0]
    reach = 1.0 if depth > 1 else 0.7  # room for the links that bow around a column
    xlim = (-0.6, depth + 1.6)
    ylim = (min(ys) - reach, max(ys) + reach)
    # Place the labels first (in inches), so the side table's width is known.
    main_w, main_h = width * 0.96, height * 0.80
    placer = _Placer(main_w / (xlim[1] - xlim[0]), main_h / (ylim[1] - ylim[0]))
    for name in net.inputs:
        placer.take(placer.box(*pos[name], name, 9, 0.05))
    for u in net.neurons:
        placer.take(placer.box(*pos[u.name], _neuron_label(u, gains.get(u.name)), 8.5, 0.05))
    for k, o in enumerate(net.outputs):
        placer.take(placer.box(depth + 1.0, (n_out - 1) / 2 - k, o.name, 9, 0.05))
    placed: dict[int, tuple[float, float]] = {}
    unplaced: list[int] = []
    role = {u.name: u.role for u in net.neurons}
    if label_links:
        order = sorted(range(len(links)), key=lambda j: -abs(links[j][2]))
        for j in order:
            src, u, w = links[j]
            if u.role == "relay" or role.get(src) == "relay":
                continue
            p0, p1 = pos[src], pos[u.name]
            for t in _STAGGER:
                x, y = _bezier(p0, p1, _bow(p0, p1), t)
                b = placer.box(x, y, _num(w), _FONT, 0.03)
                if placer.free(b):
                    placer.take(b)
                    placed[j] = (x, y)
                    break
            else:
                unplaced.append(j)
    side = bool(unplaced)
    extra = 2.6 if side else 0.0
    fig = Figure(figsize=(width + extra, height), dpi=100)
    FigureCanvasAgg(fig)
    frac = width / (width + extra)
    ax = fig.add_axes((0.02 * frac, 0.14, 0.96 * frac, 0.80))
    ax.set_axis_off()
    wmax = max([abs(w) for _, _, w in links] + [1.0])
    for j, (src, u, w) in enumerate(links):
        p0, p1 = pos[src], pos[u.name]
        light = u.role == "relay" or role.get(src) == "relay"
        colour = RELAY if light else POSITIVE if w > 0 else NEGATIVE
        _curve(ax, p0, p1, _bow(p0, p1), edgecolor=colour, alpha=0.55 if light else 0.95,
               linewidth=0.9 + 2.4 * math.sqrt(abs(w) / wmax),
               linestyle=POSITIVE_STYLE if w > 0 else NEGATIVE_STYLE, zorder=1)
        if j in placed:
            ax.text(*placed[j], _num(w), fontsize=_FONT, color="#111111", ha="center",
                    va="center", zorder=3,
                    bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": colour,
                          "lw": 0.8})
    for name in net.inputs:
        ax.text(*pos[name], name, ha="center", va="center", fontsize=9, zorder=4,
                bbox={"boxstyle": "round,pad=0.35", "fc": INPUT_FACE, "ec": INPUT_EDGE})
    for u in net.neurons:
        relay = u.role == "relay"
        face = "#f6f6f6" if relay else EXTRA_FACE if u.role == "extra" else GATE_FACE
        ax.text(*pos[u.name], _neuron_label(u, gains.get(u.name)), ha="center", va="center",
                fontsize=7.5 if relay else 8.5, zorder=4, color="#666666" if relay else "black",
                bbox={"boxstyle": "round,pad=0.35", "fc": face,
                      "ec": RELAY if relay else GATE_EDGE,
                      "linestyle": "--" if relay else "-"})
    for k, o in enumerate(net.outputs):
        p1 = (depth + 1.0, (n_out - 1) / 2 - k)
        p0 = pos[o.source]
        _curve(ax, p0, p1, _bow(p0, p1), edgecolor=OUTPUT_EDGE, linewidth=1.0,
               linestyle=":", zorder=1)
        ax.text(*p1, o.name, ha="center", va="center", fontsize=9, zorder=4,
                fontweight="bold", bbox={"boxstyle": "round,pad=0.35", "fc": OUTPUT_FACE,
                                         "ec": OUTPUT_EDGE})
    ax.set_xlim(*xlim)
    ax.set_ylim(*ylim)
    notes = ["b: bias · ⟨…⟩: the definition a helper neuron serves · links that skip a "
             "layer curve · colours: Okabe & Ito palette"]
    if gains:
        notes.append("soft neurons: integer weights and bias shown, ×g is the gain "
                     "(stored weight = shown weight × g)")
    if hidden:
        notes.append(f"{count(hidden, 'link')} with |w| < {_num(cutoff)} hidden "
                     f"(of {len(every)}; min_weight / --min-weight to change)")
    if not label_links:
        notes.append(f"weights not written: {count(len(links), 'link')} "
                     f"(more than {max_labels})")
    if side:
        notes.append(f"{count(len(unplaced), 'weight')} with no free place on "
                     "the link: listed on the right")
        _side_table(fig, frac, [links[j] for j in unplaced])
    fig.text(0.5 * frac, 0.975, _title(net), ha="center", va="top", fontsize=10)
    _legend(fig, notes, signs=bool(links))
    return fig


def _side_table(fig: Figure, frac: float, links: Sequence[tuple[str, Any, float]]) -> None:
    """The weights that found no place on their link, as ``source → neuron  w``."""
    rows = [f"{src} → {u.name}  {_num(w)}" for src, u, w in links]
    if len(rows) > SIDE_ROWS:
        rows = rows[: SIDE_ROWS - 1] + [f"… and {len(links) - SIDE_ROWS + 1} more "
                                        "(thresholdc inspect)"]
    fig.text(frac + 0.01, 0.92, "weights\n" + "\n".join(rows), ha="left", va="top",
             fontsize=7.5, family="DejaVu Sans Mono", linespacing=1.3)


def _summary(net: Network, max_neurons: int, cutoff: float) -> Figure:
    """One box per layer, ``PER_ROW`` boxes a row, wrapping onto further rows."""
    depth = net.depth
    layer_of = {name: 0 for name in net.inputs}
    for u in net.neurons:
        layer_of[u.name] = u.layer
    into: dict[int, list[int]] = {}
    skips: dict[int, int] = {}
    for u in net.neurons:
        for i, w in zip(u.inputs, u.weights, strict=True):
            if w != 0 and abs(w) >= cutoff:
                c = into.setdefault(u.layer, [0, 0])
                c[0 if w > 0 else 1] += 1
                if u.layer - layer_of[i] > 1:
                    skips[u.layer] = skips.get(u.layer, 0) + 1

    def few(names: Sequence[str]) -> str:
        shown = ", ".join(names[:6])
        return shown + (f", … (+{len(names) - 6})" if len(names) > 6 else "")

    boxes: list[tuple[str, str, str]] = [
        (f"inputs\n{count(len(net.inputs), 'unit')}\n{_wrap(few(list(net.inputs)))}",
         INPUT_FACE, INPUT_EDGE)]
    sizes = net.layer_sizes()
    for L in range(1, depth + 1):
        units = [u for u in net.neurons if u.layer == L]
        roles = sizes.get(L, {})
        acts = sorted({u.activation for u in units})
        parts = [count(roles[r], r) for r in ("gate", "relay", "extra") if roles.get(r)]
        text = f"layer {L}\n{count(len(units), 'neuron')}\n" + "\n".join(parts)
        text += f"\n{', '.join(acts)}"
        p_n, n_n = into.get(L, [0, 0])
        text += f"\nin: {count(p_n + n_n, 'link')}\n(+{p_n} / −{n_n})"
        if skips.get(L):
            text += f"\n{skips[L]} skip a layer"
        boxes.append((text, GATE_FACE, GATE_EDGE))
    out_names = [o.name for o in net.outputs]
    by_layer: dict[int, int] = {}
    for o in net.outputs:
        by_layer[layer_of[o.source]] = by_layer.get(layer_of[o.source], 0) + 1
    read = few([f"L{L}: {c}" for L, c in sorted(by_layer.items(), reverse=True)])
    boxes.append((f"outputs\n{len(out_names)}\n{_wrap(few(out_names))}\nread from\n"
                  f"{_wrap(read)}", OUTPUT_FACE, OUTPUT_EDGE))
    per_row = min(len(boxes), max(PER_ROW, min(8, math.ceil(math.sqrt(1.5 * len(boxes))))))
    n_rows = math.ceil(len(boxes) / per_row)
    width, height = max(7.0, 2.4 * per_row), 2.4 * n_rows + 1.3
    fig = Figure(figsize=(width, height), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.02, 0.1, 0.96, 0.82))
    ax.set_axis_off()
    where = [(k % per_row, -(k // per_row)) for k in range(len(boxes))]
    for k in range(len(boxes) - 1):
        (x0, y0), (x1, y1) = where[k], where[k + 1]
        if y0 == y1:
            arrow = FancyArrowPatch((x0 + 0.36, y0), (x1 - 0.36, y1), arrowstyle="-|>",
                                    mutation_scale=12, color="#555555", lw=1.2, zorder=1)
        else:  # wrap: from the end of a row to the start of the next one
            arrow = FancyArrowPatch((x0, y0 - 0.36), (x1, y1 + 0.36), arrowstyle="-|>",
                                    mutation_scale=12, color="#555555", lw=1.0,
                                    linestyle="--", connectionstyle="arc3,rad=0",
                                    zorder=1)
        ax.add_patch(arrow)
    for (text, face, edge), (x, y) in zip(boxes, where, strict=True):
        ax.text(x, y, text, ha="center", va="center", fontsize=8.5, zorder=4,
                bbox={"boxstyle": "round,pad=0.4", "fc": face, "ec": edge})
    ax.set_xlim(-0.6, per_row - 0.4)
    ax.set_ylim(-(n_rows - 1) - 0.55, 0.55)
    if len(net.neurons) > max_neurons:
        why = (f"{count(len(net.neurons), 'neuron')} is more than max_neurons={max_neurons} "
               "(raise it, e.g. --max-neurons, to draw every neuron)")
    else:
        why = f"depth {depth} is more than {MAX_DEPTH} columns fit"
    notes = [f"summary per layer: {why}"]
    if cutoff:
        notes.append(f"links with |w| < {_num(cutoff)} not counted")
    fig.text(0.5, 0.975, _title(net), ha="center", va="top", fontsize=10)
    _legend(fig, notes, signs=False)
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


def figure(net: Network, *, max_neurons: int = MAX_NEURONS, max_labels: int = MAX_LABELS,
           min_weight: float | None = None) -> Figure:
    """The diagram of ``net`` as a matplotlib Figure (Agg canvas, no pyplot state).

    Parameters
    ----------
    net : Network
    max_neurons : int
        Above this many neurons a per-layer summary is drawn instead (and the picture says so).
    max_labels : int
        Above this many links the weights are not written on them (and the picture says so).
    min_weight : float, optional
        Links with |w| below this are hidden (the legend says how many); default
        :func:`weight_cutoff`.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> net = Network(("a",), (Neuron("n", 1, ("a",), (-1,), 0.5),), (Output("n", "n"),))
    >>> [round(float(x), 2) for x in figure(net).get_size_inches()]
    [8.1, 3.8]
    """
    if max_neurons < 0:
        raise UsageError(f"max_neurons must be at least 0, got {max_neurons}")
    if min_weight is not None and min_weight < 0:
        raise UsageError(f"min_weight must be at least 0, got {min_weight}")
    cutoff = weight_cutoff(net) if min_weight is None else float(min_weight)
    if len(net.neurons) > max_neurons or net.depth > MAX_DEPTH:
        return _summary(net, max_neurons, cutoff)
    return _detailed(net, max_labels, cutoff)


def render(net: Network, fmt: str, *, max_neurons: int = MAX_NEURONS,
           max_labels: int = MAX_LABELS, min_weight: float | None = None) -> bytes:
    """The diagram as ``png`` or ``svg`` bytes (deterministic)."""
    fig = figure(net, max_neurons=max_neurons, max_labels=max_labels, min_weight=min_weight)
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
         max_labels: int = MAX_LABELS, min_weight: float | None = None) -> None:
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
    min_weight : float, optional
        Links with |w| below this are hidden (default :func:`weight_cutoff`).

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
    path = os.fspath(path)
    suffix = os.path.splitext(path)[1].lower()
    if suffix not in FORMATS:
        shown = f"unknown suffix {suffix!r}" if suffix else "no suffix"
        raise UsageError(f"{shown} to draw into; supported: {', '.join(FORMATS)}", file=path)
    atomic_write(path, render(net, suffix[1:], max_neurons=max_neurons, max_labels=max_labels,
                              min_weight=min_weight))
