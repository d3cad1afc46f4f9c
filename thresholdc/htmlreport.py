"""A self-contained HTML page about a network: summary, layers, the drawing, verification per
output and, for trained networks, what training recorded.

Everything is inline (CSS, the drawing as SVG, charts as SVG); the page loads nothing from
anywhere, so it can be mailed or archived as one file.  Text is escaped with :func:`html.escape`.
Pictures need the optional extra ``plot`` (matplotlib); without it the page says so.

Margins: the *margin* of an output on an input is its pre-activation z (for a neuron,
Σ w·x + b; the output is read as true when z > 0), so |z| is the distance from the decision
point whatever the activation; the verification column "min margin" is the value that the
verification method reports for that output.

>>> from thresholdc import compile_rules
>>> rules = "input a, b\\ny = a and b\\n"
>>> page = report_html(compile_rules(rules), rules=rules)
>>> page.startswith("<!DOCTYPE html>") and "<svg" in page and "equal" in page
True
"""

from __future__ import annotations

import html
import io
import re
from collections.abc import Mapping, Sequence, Set
from typing import Any

from . import export
from .api import as_source, verify
from .errors import UsageError, VerificationUndecided
from .forcing import describe_assignment, inputs_that_matter
from .ir.network import Network
from .network import atomic_write
from .present import DISPLAY, count, degain

__all__ = ["report_html", "write_report", "network_card", "network_svg", "report_card"]

_CSS = """
body{font-family:"DejaVu Sans",Helvetica,Arial,sans-serif;margin:2em auto;max-width:1100px;
color:#1d1d1d;line-height:1.4;padding:0 1em}
h1{font-size:1.5em;margin-bottom:.2em}h2{font-size:1.15em;margin-top:1.8em;
border-bottom:1px solid #c9c3b0;padding-bottom:.2em}
table{border-collapse:collapse;margin:.5em 0}td,th{padding:.2em .7em;text-align:left;
border-bottom:1px solid #e4e0d4}th{background:#f3f0e6}td.n{text-align:right;
font-variant-numeric:tabular-nums}
.ok{color:#00664a;font-weight:bold}.bad{color:#8f2d66;font-weight:bold}
.muted{color:#5c5c5c}.figure svg{max-width:100%;height:auto}code{background:#f3f0e6;
padding:0 .2em}
"""


def _e(x: Any) -> str:
    return html.escape(str(x), quote=True)


def _table(header: Sequence[str], rows: Sequence[Sequence[Any]], numeric: Set[int] = frozenset()
           ) -> str:
    head = "".join(f"<th>{_e(h)}</th>" for h in header)
    thead = f"<thead><tr>{head}</tr></thead>" if any(header) else ""
    body = "".join(
        "<tr>" + "".join(f'<td class="n">{_e(c)}</td>' if i in numeric else f"<td>{_e(c)}</td>"
                         for i, c in enumerate(r)) + "</tr>"
        for r in rows)
    return f"<table>{thead}<tbody>{body}</tbody></table>"


def _svg_inline(data: bytes) -> str:
    """An SVG document as an inline element (XML prolog and doctype dropped)."""
    text = data.decode("utf-8")
    start = text.find("<svg")
    return text[start:] if start >= 0 else ""


def network_svg(net: Network) -> str | None:
    """The drawing of ``net`` as an SVG element, or None without matplotlib."""
    try:
        data = export.render(net, "svg")
    except UsageError:  # matplotlib (the plot extra) is not installed
        return None
    return _svg_inline(data)


def _drawing(net: Network) -> str:
    svg = network_svg(net)
    if svg is None:
        return ('<p class="muted">The drawing needs matplotlib (the <code>plot</code> extra).'
                "</p>")
    return f'<div class="figure">{svg}</div>'


def network_card(net: Network) -> str:
    """A notebook card: the summary table and the drawing (``Network._repr_html_``).

    >>> from thresholdc import compile_rules
    >>> card = compile_rules("input a\\ny = not a\\n")._repr_html_()
    >>> card.startswith("<div") and "1 neuron" in card
    True
    """
    return f'<div class="thresholdc-network">{_summary(net)}{_drawing(net)}</div>'


def report_card(report: Any) -> str:
    """A notebook card of a verification :class:`~thresholdc.verification.report.Report`.

    >>> from thresholdc import compile_rules, verify
    >>> card = verify(compile_rules("input a\\ny = a\\n"), "input a\\ny = not a\\n")._repr_html_()
    >>> "different" in card and "<table>" in card
    True
    """
    rows = _output_rows(report)
    items = "".join(
        f"<li><code>{_e(' '.join(f'{k}={v}' for k, v in c.assignment.items()))}</code>: "
        f"{_e(c.output)} expected {int(c.expected)}</li>" for c in report.counterexamples[:5])
    return (f'<div class="thresholdc-report"><p>verification: <b>{_e(report.result)}</b> '
            f"(method {_e(report.method)})</p>"
            + _table(("output", "verdict", "disagreements", "min margin"), rows, numeric={2, 3})
            + (f"<ul>{items}</ul>" if items else "") + "</div>")


def _summary(net: Network) -> str:
    acts = ", ".join(sorted({u.activation for u in net.neurons})) or "none"
    meta = net.meta or {}
    rows = [
        ("inputs", count(len(net.inputs), "input unit")),
        ("outputs", ", ".join(net.output_names) or "none"),
        ("neurons", count(len(net.neurons), "neuron")),
        ("parameters", f"{net.parameter_count:,}"),
        ("depth", net.depth),
        ("activation", acts),
        ("form", "strict layered" if net.is_strict() else "direct connections across layers"),
    ]
    if meta.get("tool"):
        rows.append(("written by", meta["tool"]))
    if meta.get("source_sha256"):
        rows.append(("source SHA-256", meta["source_sha256"]))
    rec = meta.get("verification")
    if isinstance(rec, dict):
        rows.append(("stored verification", f"{rec.get('method')}: {rec.get('result')}"))
    return _table(("", ""), rows)


def _layers(net: Network) -> str:
    gains = degain(net)
    layer_of = {name: 0 for name in net.inputs} | {u.name: u.layer for u in net.neurons}
    rows = []
    for L, roles in net.layer_sizes().items():
        units = [u for u in net.neurons if u.layer == L]
        links = [(i, w) for u in units for i, w in zip(u.inputs, u.weights, strict=True)
                 if w != 0]
        skip = sum(1 for i, _ in links if L - layer_of[i] > 1)
        rows.append((L, len(units), roles.get("gate", 0), roles.get("relay", 0),
                     roles.get("extra", 0), ", ".join(sorted({u.activation for u in units})),
                     len(links), skip))
    text = _table(("layer", "neurons", "gates", "relays", "extra", "activation",
                   "links in", "skip a layer"), rows, numeric={0, 1, 2, 3, 4, 6, 7})
    if gains:
        text += ('<p class="muted">Soft neurons compiled with a gain: the drawing shows '
                 "integer weights; the stored weight is that times the gain.</p>")
    return text


def _output_rows(report: Any) -> list[tuple[Any, ...]]:
    """One row per output: name, verdict, disagreements (``-`` when not counted), margin."""
    return [(o.name, getattr(o, "verdict", "equal" if o.agrees else "different"),
             "-" if o.disagreements is None else o.disagreements,
             "-" if o.min_margin is None else f"{o.min_margin:.4g}") for o in report.outputs]


def _verification(net: Network, rules: Any) -> str:
    if rules is None:
        rec = (net.meta or {}).get("verification")
        if isinstance(rec, dict):
            return (f"<p>No rules given; the file records <code>{_e(rec.get('method'))}: "
                    f"{_e(rec.get('result'))}</code> from its compile. Pass the rules to "
                    "check again.</p>")
        return "<p>No rules given and none recorded.</p>"
    source = as_source(rules)
    try:
        report = verify(net, source)
    except VerificationUndecided as err:
        return f'<p class="bad">undecided: {_e(err.message)}</p>'
    verdict = "ok" if report.result == "equal" else "bad"
    out = [f'<p>Against <code>{_e(source.file)}</code>: <span class="{verdict}">'
           f"{_e(report.result)}</span> (method {_e(report.method)}).</p>"]
    rows = _output_rows(report)
    out.append(_table(("output", "verdict", "disagreements", "min margin"), rows,
                      numeric={2, 3}))
    if report.counterexamples:
        items = []
        for c in report.counterexamples[:10]:
            kept = inputs_that_matter(net, source, c.assignment, c.output)
            shown = describe_assignment(c.assignment, kept[0] if kept else None)
            item = (f"<li><code>{_e(shown)}</code>: {_e(c.output)} expected "
                    f"{int(c.expected)}</li>")
            if item not in items:  # one line per case once free inputs are left out
                items.append(item)
        out.append("<p>Counterexamples (only the inputs that force the difference):</p><ul>"
                   + "".join(items) + "</ul>")
    for proof in report.proofs:
        out.append(f'<p class="muted">proved: {_e(proof)}</p>')
    for note in report.notes:
        out.append(f'<p class="muted">note: {_e(note)}</p>')
    out.append('<p class="muted">Margin: the output\'s pre-activation distance from its '
               "decision point, as the verification method reports it.</p>")
    return "".join(out)


def _curve_svg(xs: Sequence[float], series: Mapping[str, Sequence[float]], xlabel: str,
               ylabel: str, *, logx: bool = False) -> str:
    """A small line chart as inline SVG (matplotlib; empty without it)."""
    try:
        import matplotlib
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure
    except ImportError:
        return ""
    fig = Figure(figsize=(5.6, 3.0), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot(1, 1, 1)
    styles = [("#009E73", "-", "o"), ("#CC79A7", "--", "s"), ("#0072B2", ":", "^")]
    for k, (name, ys) in enumerate(series.items()):
        colour, line, marker = styles[k % len(styles)]
        ax.plot(xs, ys, color=colour, linestyle=line, marker=marker, markersize=3.5,
                label=name)
    if logx:
        ax.set_xscale("symlog", linthresh=1e-3)
    ax.set_xlabel(xlabel)
    ax.set_ylabel(ylabel)
    ax.grid(alpha=0.3)
    if len(series) > 1:
        ax.legend(fontsize=8, frameon=False)
    fig.tight_layout()
    buffer = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": "thresholdc", "svg.fonttype": "none"}):
        fig.savefig(buffer, format="svg", metadata={"Date": None, "Creator": None})
    return f'<div class="figure">{_svg_inline(buffer.getvalue())}</div>'


def _history(training: dict[str, Any]) -> tuple[list[float], dict[str, list[float]]] | None:
    """Per-epoch curves from ``meta.training.history`` (a list of ``{"epoch", name: value}``
    or a dict of lists), if training recorded them."""
    hist = training.get("history")
    if isinstance(hist, list) and hist and isinstance(hist[0], dict):
        keys = [k for k in hist[0] if k != "epoch" and isinstance(hist[0][k], (int, float))]
        xs = [float(h.get("epoch", i + 1)) for i, h in enumerate(hist)]
        return xs, {k: [float(h[k]) for h in hist if h.get(k) is not None] for k in keys}
    if isinstance(hist, dict):
        series = {k: [float(v) for v in vs] for k, vs in hist.items()
                  if k != "epoch" and isinstance(vs, list) and vs}
        if series:
            n = max(len(v) for v in series.values())
            xs = [float(x) for x in hist.get("epoch", range(1, n + 1))]
            return xs, {k: v for k, v in series.items() if len(v) == len(xs)}
    return None


def _num(x: Any, digits: int = 4) -> str:
    """A recorded number for a table cell (``-`` when missing)."""
    if x is None:
        return "-"
    return f"{x:.{digits}g}" if isinstance(x, float) else str(x)


def _anchor_text(anchor: Any) -> str:
    return "∞ (rules alone)" if anchor is None else _num(anchor)


def _training_rows(training: dict[str, Any]) -> list[tuple[str, str]]:
    """The run's choices and outcome, from the keys ``thresholdc train`` writes."""
    rows: list[tuple[str, str]] = []
    init = training.get("init")
    if init is not None:
        start = {"rules": "the rules' structure", "certified": "the compiled network, "
                 "certified sigmoid gains", "random": "random weights"}.get(init, str(init))
        if training.get("weight") is not None and init == "rules":
            start += f", ω = {_num(training['weight'])}"
        rows.append(("start", start))
    if "anchor" in training and not isinstance(training["anchor"], dict):
        rows.append(("anchor λ", _anchor_text(training["anchor"])))
    for key, label in (("loss", "loss"), ("optimizer", "optimizer"), ("rows", "rows"),
                       ("epochs_run", "iterations run"), ("best_epoch", "iteration kept"),
                       ("training_accuracy", "training accuracy"),
                       ("validation_accuracy", "validation accuracy"),
                       ("validation_rows", "validation rows")):
        if key in training and not isinstance(training[key], (dict, list)):
            rows.append((label, _num(training[key])))
    if training.get("outputs"):
        rows.append(("outputs trained", ", ".join(map(str, training["outputs"]))))
    data = training.get("data")
    if isinstance(data, dict) and isinstance(data.get("labels"), dict):
        labels = ", ".join(f"{o} ← column {c}" for o, c in data["labels"].items())
        if data.get("positive") is not None:
            labels += f" (true where the value is {data['positive']})"
        rows.append(("labels", labels))
    if training.get("frozen"):
        rows.append(("frozen", ", ".join(map(str, training["frozen"]))))
    tol = training.get("start_tolerance")
    if isinstance(tol, dict):
        if tol.get("worst_error") is None:
            text = "not bounded" if tol.get("decides_rules") is None else \
                "the start disagrees with the rules"
        else:
            how = "exact" if tol.get("method") == "exhaustive" else "upper bound"
            text = (f"{tol['worst_error']:.4f} ({how}); "
                    + ("decides every rule" if tol.get("decides_rules") else
                       "does not decide every rule"))
        rows.append(("start tolerance (worst output error on the rule domain)", text))
    held = training.get("held_out")
    if isinstance(held, dict) and "error" in held:
        where = "cross-validation folds" if held.get("rows") == "folds" else \
            f"{held.get('rows')} held-out rows"
        text = (f"{_num(held.get('start_error'))} → {_num(held.get('error'))} ({where}; loss "
                f"{_num(held.get('start_loss'))} → {_num(held.get('loss'))})")
        if held.get("worse"):
            text += ": worse than the start"
        rows.append(("held-out error, start → trained", text))
    options = training.get("options")
    if isinstance(options, dict):
        rows.append(("options", ", ".join(f"{k}={v}" for k, v in options.items())))
    return rows


def _search_section(search: dict[str, Any]) -> str:
    """The cross-validation: every candidate's held-out scores, the chosen one marked, a
    chart of held-out loss against λ per ω, and the final path."""
    scores = [s for s in search.get("scores") or [] if isinstance(s, dict) and "loss" in s]
    if not scores:
        return ""
    alone = bool(search.get("rules_alone"))
    chosen = (search.get("weight"), None if alone else search.get("anchor"))
    rows = []
    for sc in scores:
        mark = "chosen" if (sc.get("weight"), sc.get("anchor")) == chosen else ""
        rows.append((_num(sc.get("weight")), _anchor_text(sc.get("anchor")),
                     _num(sc.get("loss")), _num(sc.get("stderr"), 2), _num(sc.get("error")),
                     _num(sc.get("iterations")), mark))
    what = ("the rules alone (the untrained start): no trained candidate beat it by more "
            "than one standard error" if alone else
            f"ω = {_num(search.get('weight'))}, λ = {_num(search.get('anchor'))}")
    out = [f"<p>λ and ω chosen by cross-validation: {_e(what)}. Held-out scores, mean over "
           "the folds (candidates every fold reached):</p>",
           _table(("ω", "λ", "held-out loss", "± s.e.", "held-out error", "iterations kept",
                   ""), rows, numeric={0, 2, 3, 4, 5})]
    grid = [g for g in search.get("grid") or [] if isinstance(g, (int, float))]
    steps = search.get("path_iterations") or []
    if grid and len(steps) == len(grid):
        path = ", ".join(f"λ = {_num(g)}: {_num(n)}" for g, n in zip(grid, steps, strict=True))
        out.append(f"<p>Final network: the same path on all rows, iterations per λ "
                   f"({_e(path)}).</p>")
    elif alone:
        out.append("<p>Final network: the start itself, untrained.</p>")
    lams = sorted({float(sc["anchor"]) for sc in scores if sc.get("anchor") is not None},
                  reverse=True)
    if len(lams) > 1:
        series: dict[str, list[float]] = {}
        for sc in scores:
            if sc.get("anchor") is None:
                continue
            ys = series.setdefault(f"ω = {_num(sc['weight'])}", [float("nan")] * len(lams))
            ys[lams.index(float(sc["anchor"]))] = float(sc["loss"])
        out.append(_curve_svg(lams, series, "anchor λ", "held-out loss", logx=True))
    return "".join(out)


def _training(net: Network) -> str:
    """What ``meta.training`` records: the choices and outcome, the search, the notes (and the
    per-epoch curves and λ chart of files that recorded them in earlier layouts)."""
    training = (net.meta or {}).get("training")
    if not isinstance(training, dict):
        return ""
    out = ["<h2>Training</h2>", _table(("", ""), _training_rows(training))]
    search = training.get("search")
    if isinstance(search, dict):
        out.append(_search_section(search))
    notes = [n for n in training.get("notes") or [] if isinstance(n, str)]
    if notes:
        out.append("<p>Notes:</p><ul>" + "".join(f"<li>{_e(n)}</li>" for n in notes) + "</ul>")
    curves = _history(training)
    if curves and curves[1]:
        out.append("<p>Training curves (per epoch, as recorded in the file):</p>")
        out.append(_curve_svg(curves[0], curves[1], "epoch", "value"))
    anchor = training.get("anchor")
    grid = anchor.get("grid") if isinstance(anchor, dict) else None
    if (isinstance(anchor, dict) and isinstance(grid, list) and grid
            and all("anchor" in g and "loss" in g for g in grid)):
        out.append(f"<p>Anchor strength chosen by {_e(anchor.get('method', 'search'))}: "
                   f"λ = {_e(anchor.get('value'))}; held-out loss per λ:</p>")
        out.append(_curve_svg([float(g["anchor"]) for g in grid],
                              {"held-out loss": [float(g["loss"]) for g in grid]},
                              "anchor λ", "loss", logx=True))
    return "".join(out)


def report_html(network: Network, rules: Any = None, *, title: str | None = None) -> str:
    """The HTML page of ``network`` (and its verification against ``rules``: rule text, a
    ``Path`` or a Source), as one string.

    >>> from thresholdc import compile_rules
    >>> "<h2>Layers</h2>" in report_html(compile_rules("input a\\ny = not a\\n"))
    True
    """
    name = title or "network"
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f"<title>{_e(name)}: thresholdc report</title><style>{_CSS}</style></head><body>",
        f"<h1>{_e(name)}</h1>",
        '<p class="muted">A report written by thresholdc. A compiled network is not a '
        "certified safety function.</p>",
        "<h2>Summary</h2>", _summary(network),
        "<h2>Layers</h2>", _layers(network),
        "<h2>Drawing</h2>", _drawing(network),
        "<h2>Verification</h2>", _verification(network, rules),
        _training(network),
        "</body></html>",
    ]
    page = "\n".join(parts) + "\n"
    return re.sub(r"[ \t]+\n", "\n", page)


def write_report(network: Network, path: str, rules: Any = None, *,
                 title: str | None = None) -> None:
    """Write :func:`report_html` to ``path`` atomically (a temporary file, then a rename)."""
    atomic_write(str(path), report_html(network, rules, title=title))


DISPLAY.update(network_html=network_card, network_svg=network_svg, report_html=report_card)
