"""Presentation helpers shared by ``inspect``, the drawings and the HTML report.

- :func:`count`: a number with its noun in the singular or plural;
- :func:`degain`: a soft neuron's weights as integers times a gain, when they are;
- :data:`DISPLAY`: the notebook renderers of networks and reports, by name.

>>> count(1, "neuron"), count(2, "bias", "biases"), count(0, "link")
('1 neuron', '2 biases', '0 links')
"""

from __future__ import annotations

from typing import Any

__all__ = ["count", "degain", "DISPLAY"]

#: Notebook renderers by name (``network_html``, ``network_svg``, ``report_html``): the package
#: ``__init__`` registers stand-ins that load :mod:`thresholdc.htmlreport` when first shown, and
#: htmlreport puts its own functions here when imported (``ir`` and ``verification`` only look
#: them up, so neither imports upward).
DISPLAY: dict[str, Any] = {}


def count(n: int, one: str, many: str | None = None) -> str:
    """``n`` with the singular or plural noun: ``1 neuron``, ``3 neurons``.

    >>> count(1_234, "row")
    '1,234 rows'
    """
    return f"{n:,} {one if n == 1 else (many or one + 's')}"


def _integral(values: list[float], gain: float, half_bias: float) -> bool:
    """True when every weight / gain is an integer and bias / gain a multiple of 1/2."""
    if gain <= 0:
        return False
    ws = [v / gain for v in values]
    ok = all(abs(w - round(w)) <= 1e-4 * max(1.0, abs(w)) for w in ws)
    b = 2 * half_bias / gain
    return ok and abs(b - round(b)) <= 1e-4 * max(1.0, abs(b))


def _mapping(value: Any) -> dict[str, Any]:
    """``value`` if it is a JSON object, else an empty one."""
    return value if isinstance(value, dict) else {}


def degain(network: Any) -> dict[str, float]:
    """Neuron name -> gain g for every soft neuron whose stored weights are integers times g
    and whose bias is a multiple of g/2 (as the compiler writes them).

    The gain is taken from ``meta.certificate`` (per neuron), else ``meta.options.gain``, else
    the smallest |weight| of the network when it fits every soft neuron.  Step neurons and
    neurons whose weights are not of that form (trained ones) are left out.

    >>> from thresholdc.ir.network import Network, Neuron, Output
    >>> n = Neuron("y", 1, ("a", "b"), (8.0, -16.0), -12.0, activation="sigmoid")
    >>> degain(Network(("a", "b"), (n,), (Output("y", "y"),)))
    {'y': 8.0}
    """
    meta = _mapping(getattr(network, "meta", None))  # meta is free-form in a network file
    per = _mapping(_mapping(meta.get("certificate")).get("neurons"))
    soft = [u for u in network.neurons if u.activation != "step" and u.weights]
    common = _mapping(meta.get("options")).get("gain")
    if not isinstance(common, (int, float)) or common <= 0:
        smallest = [abs(float(w)) for u in soft for w in u.weights if w != 0]
        common = min(smallest) if smallest else None
        if common is not None and not all(
                _integral([float(w) for w in u.weights], common, float(u.bias)) for u in soft):
            common = None  # one gain must fit every soft neuron
    out: dict[str, float] = {}
    for u in soft:
        weights = [float(w) for w in u.weights]
        for g in (_mapping(per.get(u.name)).get("gain"), common):
            if isinstance(g, (int, float)) and g > 0 and _integral(weights, float(g),
                                                                  float(u.bias)):
                if float(g) != 1.0:
                    out[u.name] = float(g)
                break
    return out
