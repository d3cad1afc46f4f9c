"""The compiler driver: a straight list of passes from a source to a verified network.

``compile_source`` runs: lower to gates → collapse (or map one construction per gate) →
activation and layering → verify; it stores the options and the verification record in the
network's ``meta`` and returns the network together with a summary of what happened.

>>> net = compile_rules("input a, b\\nboth = a and b\\n")
>>> net.neurons[0].weights == (1, 1), net.neurons[0].bias, net.meta["verification"]["result"]
(True, -1.5, 'equal')
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from . import progress
from .errors import ThresholdcError, UsageError, VerificationUndecided
from .ir.network import Network, check_network
from .ir.reference import Reference
from .logic import load_source, network_features, source_from_text
from .network import apply_activation, survives
from .synth import collapse, map_to_neurons
from .verify import Report, verify_network
from .version import __version__

__all__ = ["compile_rules", "compile_source", "compile_file", "CompileResult", "DEFAULTS",
           "CompileError", "network_stats"]

#: Every option of a compile, with its default.  The first group shapes the network and is
#: recorded in ``meta.options``; the second only decides how the result is checked.
DEFAULTS: dict[str, Any] = {
    "activation": "step",
    "encoding": "binary",
    "gain": None,
    "tolerance": None,
    "layered": False,
    "synthesis": True,
    "simplify_support": 6,
    "cut_size": 6,
    "max_fan_in": None,
    "max_weight": None,
}
CHECK_DEFAULTS: dict[str, Any] = {"verify": "auto", "max_inputs": 24, "time_limit": 60.0}


class CompileError(ThresholdcError):
    """The compiled network is not equal to its own source (an internal error: exit 1)."""

    exit_code = 1


@dataclass
class CompileResult:
    """A compiled network and what the summary prints about it."""

    network: Network
    report: Report | None
    before: dict[str, int] = field(default_factory=dict)
    after: dict[str, int] = field(default_factory=dict)
    notes: list[str] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    seconds: dict[str, float] = field(default_factory=dict)
    survives: bool = True


def network_stats(net: Network) -> dict[str, int]:
    """Neurons, depth, largest fan-in and largest |weight| (integers) of a network."""
    return {
        "neurons": len(net.neurons),
        "depth": net.depth,
        "max_fan_in": max((n.fan_in for n in net.neurons), default=0),
        "max_weight": int(max((abs(w) for n in net.neurons for w in n.weights), default=0)),
    }


def _options(given: dict[str, Any]) -> tuple[dict[str, Any], dict[str, Any]]:
    """Split and validate keyword options; unknown ones are refused, listing the valid ones."""
    unknown = sorted(set(given) - set(DEFAULTS) - set(CHECK_DEFAULTS))
    if unknown:
        valid = ", ".join(list(DEFAULTS) + list(CHECK_DEFAULTS))
        raise UsageError(f"unknown option(s) {', '.join(unknown)}; valid options: {valid}")
    shape = {k: given.get(k, v) for k, v in DEFAULTS.items()}
    check = {k: given.get(k, v) for k, v in CHECK_DEFAULTS.items()}
    if shape["activation"] not in ("step", "sigmoid", "tanh", "relu"):
        raise UsageError(
            f"unknown activation {shape['activation']!r}; choose step, sigmoid, tanh or relu"
        )
    if shape["encoding"] not in ("binary", "bipolar"):
        raise UsageError(f"unknown encoding {shape['encoding']!r}; choose binary or bipolar")
    if (
        shape["activation"] in ("sigmoid", "tanh")
        and shape["gain"] is None
        and shape["tolerance"] is None
    ):
        shape["tolerance"] = 0.01
    for key in ("cut_size", "simplify_support", "max_fan_in", "max_weight"):
        v = shape[key]
        if v is not None and (not isinstance(v, int) or isinstance(v, bool) or v < 0):
            raise UsageError(f"the {key!r} option must be a non-negative integer. Got {v!r}.")
    if check["verify"] not in ("auto", "exhaustive", "local", "sat", "bounds", "none"):
        raise UsageError(
            f"unknown verification method {check['verify']!r}; "
            "choose auto, exhaustive, local, sat, bounds or none"
        )
    return shape, check


def _synthesise(source: Reference, shape: dict[str, Any]) -> tuple[Network, Network]:
    """The one-construction-per-gate network and the synthesised one (the same when off)."""
    gates = source.gates(shape["simplify_support"])
    mapped = map_to_neurons(gates, reserved=source.names)
    if not shape["synthesis"]:
        return mapped, mapped
    collapsed = collapse(
        gates,
        cut_size=shape["cut_size"],
        max_fan_in=shape["max_fan_in"],
        max_weight=shape["max_weight"],
        reserved=source.names,
    )
    # Keep the per-gate mapping where the cover did not win (fewest neurons, then depth) and
    # the mapping also meets the limits.
    if _size(mapped) < _size(collapsed) and _within(mapped, shape):
        return mapped, mapped
    return mapped, collapsed


def _size(net: Network) -> tuple[int, int]:
    return (len(net.neurons), net.depth)


def _within(net: Network, shape: dict[str, Any]) -> bool:
    """True when ``net`` meets the fan-in and |weight| limits of the options."""
    stats = network_stats(net)
    return (shape["max_fan_in"] is None or stats["max_fan_in"] <= shape["max_fan_in"]) and (
        shape["max_weight"] is None or stats["max_weight"] <= shape["max_weight"]
    )


def _activate(net: Network, shape: dict[str, Any]) -> Network:
    """Activation, gains and layering (the soft-activation pass owns the details)."""
    return apply_activation(
        net,
        activation=shape["activation"],
        gain=shape["gain"],
        tolerance=shape["tolerance"],
        encoding=shape["encoding"],
        layered=shape["layered"],
        progress=progress.is_enabled(),
    )


def _verify(net: Network, source: Reference, check: dict[str, Any]) -> Report | None:
    if check["verify"] == "none":
        return None
    return verify_network(
        net,
        source,
        method=check["verify"],
        max_inputs=check["max_inputs"],
        time_limit=check["time_limit"],
    )


def _survives(net: Network) -> bool:
    """False when a soft network's certificate lets an output be misread."""
    if not isinstance(net.meta.get("certificate"), dict):
        return True
    return survives(net)


def compile_source(source: Reference, **options: Any) -> CompileResult:
    """Compile a parsed source; see :data:`DEFAULTS` for the options.

    Raises CompileError (exit 1) when the verification finds the network different from its
    own source, and ThresholdcError subclasses for bad input or options.
    """
    shape, check = _options(options)
    t0 = time.perf_counter()
    mapped, net = _synthesise(source, shape)
    if source.program is not None and source.program.is_typed():
        net = Network(net.inputs, net.neurons, net.outputs, net.meta, net.encoding,
                      network_features(source.program))
    check_network(net, "<compiled>")
    synthesised = network_stats(net)
    net = _activate(net, shape)
    check_network(net, "<compiled>")
    t1 = time.perf_counter()
    result = CompileResult(net, None, network_stats(mapped), synthesised)
    result.seconds["compile"] = t1 - t0
    result.notes.extend(source.gates(shape["simplify_support"]).notes)
    if source.program is not None and source.program.unused:
        result.warnings.append(
            f"unused definition(s), not compiled: {', '.join(source.program.unused)}"
        )
    try:
        report = _verify(net, source, check)
    except VerificationUndecided as err:
        report = Report("undecided", check["verify"], 0, [], notes=[err.message])
    result.seconds["verify"] = time.perf_counter() - t1
    result.report = report
    result.survives = _survives(net)
    gain_too_small = shape["gain"] is not None and not result.survives
    if gain_too_small:
        bound = net.meta["certificate"]["bound"]
        result.warnings.append(
            f"with gain {shape['gain']:g} the certified output error bound is {bound:g}, enough "
            "to misread an output: the soft network may not compute the rules (the file is "
            "written; raise the gain or use a tolerance)"
        )
    if report is not None and report.result == "different" and not gain_too_small:
        raise CompileError(
            "internal error: the compiled network differs from its source "
            f"({len(report.counterexamples)} counterexample(s)); nothing was written",
            file=source.file,
        )
    if report is not None and report.result == "undecided":
        result.warnings.append(
            "verification undecided within its bounds; stored as skipped"
            + (f" ({report.notes[0]})" if report.notes else "")
        )
    record = report.record() if report is not None else {"method": "none", "result": "skipped"}
    meta: dict[str, Any] = {
        "tool": f"thresholdc {__version__}",
        "source_sha256": source.sha256,
        "options": shape,
        "verification": record,
    }
    for key, value in net.meta.items():
        if key not in meta:
            meta[key] = value
    result.network = Network(net.inputs, net.neurons, net.outputs, meta, net.encoding,
                             net.features)
    return result


def compile_rules(source: str | Path, **options: Any) -> Network:
    """Compile rule text (or the rule file or netlist at a ``Path``) to a verified network.

    Options (keyword-only, see :data:`DEFAULTS`): ``activation`` (step | sigmoid | tanh |
    relu), ``encoding`` (binary | bipolar), ``gain``, ``tolerance``, ``layered``,
    ``synthesis``, ``simplify_support``, ``cut_size``, ``max_fan_in``, ``max_weight``,
    ``verify`` (auto | exhaustive | local | sat | none), ``max_inputs``, ``time_limit``.

    >>> net = compile_rules("input a, b, c\\nalarm = atleast(2, a, b, c)\\n")
    >>> net.evaluate([[1, 1, 0], [0, 0, 1]]).tolist()
    [[1.0], [0.0]]
    """
    if isinstance(source, Path):
        src = load_source(str(source))
    else:
        src = source_from_text(source, "<rules>", kind="rules")
    return compile_source(src, **options).network


def compile_file(path: str, **options: Any) -> CompileResult:
    """Compile the source at ``path``; returns the network with its summary."""
    return compile_source(load_source(path), **options)
