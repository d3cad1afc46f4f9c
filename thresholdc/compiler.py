"""The compiler driver: a straight list of passes from a source to a verified network.

``compile_source`` runs: lower to gates → collapse (or map one construction per gate) →
activation and layering → verify; it stores the options and the verification record in the
network's ``meta`` and returns the network together with a summary of what happened.

>>> net = compile_rules("input a, b\\nboth = a and b\\n")
>>> net.neurons[0].weights == (1, 1), net.neurons[0].bias, net.meta["verification"]["result"]
(True, -1.5, 'equal')
"""

from __future__ import annotations

import os
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from . import progress
from .errors import (
    InternalError,
    NetworkFileError,
    UsageError,
    VerificationUndecided,
)
from .ir.network import Network, check_network
from .ir.options import HONOURED, RECORDED, CompileOptions
from .ir.reference import Reference
from .logic import load_source, network_features, source_from_text, unused_inputs
from .network import apply_activation, survives
from .synth import collapse, map_to_neurons
from .verification import Report, verify_network
from .version import __version__

__all__ = ["compile_rules", "compile_source", "compile_file", "CompileResult", "DEFAULTS",
           "CompileError", "network_stats"]

#: Every option that shapes the network, with its default (recorded in ``meta.options``);
#: the options themselves are :class:`thresholdc.ir.options.CompileOptions`.
DEFAULTS: dict[str, Any] = {name: CompileOptions.default(name) for name in RECORDED}
#: The options that only decide how the result is checked, with their defaults.
CHECK_DEFAULTS: dict[str, Any] = {
    name: CompileOptions.default(name) for name in HONOURED["verification"]
}


class CompileError(InternalError):
    """The compiled network is not equal to its own source: a bug in thresholdc (exit 3)."""


def _check_compiled(net: Network) -> None:
    """The compiler's own network must pass the reader's checks; a break is a bug, not bad
    input, so it is an InternalError (exit 3), never a NetworkFileError (exit 2)."""
    try:
        check_network(net, "<compiled>")
    except NetworkFileError as err:
        raise InternalError(f"the compiled network breaks an invariant: {err.message}") from None


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


def _passes(opts: CompileOptions) -> tuple[str, ...]:
    """The passes a compile with ``opts`` runs (names as in :data:`HONOURED`)."""
    synthesis = "collapse" if opts.synthesis else "per-gate mapping"
    checks = ("verification",) if opts.verify != "none" else ()
    return ("lowering", synthesis, "activation") + checks


def _synthesise(source: Reference, opts: CompileOptions) -> tuple[Network, Network]:
    """The one-construction-per-gate network and the synthesised one (the same when off)."""
    gates = source.gates(opts.simplify_support)
    mapped = map_to_neurons(gates, reserved=source.names)
    if not opts.synthesis:
        return mapped, mapped
    collapsed = collapse(
        gates,
        cut_size=opts.cut_size,
        max_fan_in=opts.max_fan_in,
        max_weight=opts.max_weight,
        reserved=source.names,
    )
    # Keep the per-gate mapping where the cover did not win (fewest neurons, then depth) and
    # the mapping also meets the limits.
    if _size(mapped) < _size(collapsed) and _within(mapped, opts):
        return mapped, mapped
    return mapped, collapsed


def _size(net: Network) -> tuple[int, int]:
    return (len(net.neurons), net.depth)


def _within(net: Network, opts: CompileOptions) -> bool:
    """True when ``net`` meets the fan-in and |weight| limits of the options."""
    stats = network_stats(net)
    return (opts.max_fan_in is None or stats["max_fan_in"] <= opts.max_fan_in) and (
        opts.max_weight is None or stats["max_weight"] <= opts.max_weight
    )


def _activate(net: Network, opts: CompileOptions) -> Network:
    """Activation, gains and layering (the soft-activation pass owns the details)."""
    return apply_activation(
        net,
        activation=opts.activation,
        gain=opts.gain,
        tolerance=opts.tolerance,
        encoding=opts.encoding,
        layered=opts.layered,
        progress=progress.is_enabled(),
    )


def _verify(net: Network, source: Reference, opts: CompileOptions) -> Report | None:
    if opts.verify == "none":
        return None
    return verify_network(
        net,
        source,
        method=opts.verify,
        max_inputs=opts.max_inputs,
        time_limit=opts.time_limit,
    )


def _survives(net: Network) -> bool:
    """False when a soft network's certificate lets an output be misread."""
    if not isinstance(net.meta.get("certificate"), dict):
        return True
    return survives(net)


def _compile_options(given: dict[str, Any]) -> CompileOptions:
    """``given`` as CompileOptions: one ``options=CompileOptions(...)`` or keywords."""
    if "options" in given:
        opts = given["options"]
        if len(given) > 1 or not isinstance(opts, CompileOptions):
            raise UsageError("give either options=CompileOptions(...) or keyword options, "
                             "not both")
        return opts
    return CompileOptions.from_keywords(**given)


def compile_source(source: Reference, **options: Any) -> CompileResult:
    """Compile a parsed source; the options are those of
    :class:`~thresholdc.ir.options.CompileOptions` (keywords, or one ``options=`` value).

    Raises CompileError (an internal error, exit 3) when the verification finds the network
    different from its own source, and ThresholdcError subclasses for bad input or options.
    """
    opts = _compile_options(options)
    t0 = time.perf_counter()
    mapped, net = _synthesise(source, opts)
    if source.program is not None and source.program.is_typed():
        net = Network(net.inputs, net.neurons, net.outputs, net.meta, net.encoding,
                      network_features(source.program))
    _check_compiled(net)
    synthesised = network_stats(net)
    net = _activate(net, opts)
    _check_compiled(net)
    t1 = time.perf_counter()
    result = CompileResult(net, None, network_stats(mapped), synthesised)
    result.seconds["compile"] = t1 - t0
    result.notes.extend(source.gates(opts.simplify_support).notes)
    result.warnings.extend(
        f"the {name!r} option has no effect in this compile (no pass that runs uses it)"
        for name in opts.ignored_by(_passes(opts))
    )
    if source.program is not None and source.program.unused:
        result.warnings.append(
            f"unused definition(s), not compiled: {', '.join(source.program.unused)}"
        )
    idle = unused_inputs(source)
    if idle:
        result.warnings.append(
            f"unused input(s), no output reads them (kept as input units): {', '.join(idle)}"
        )
    try:
        report = _verify(net, source, opts)
    except VerificationUndecided as err:
        report = Report("undecided", opts.verify, 0, [], notes=[err.message])
    result.seconds["verify"] = time.perf_counter() - t1
    result.report = report
    result.survives = _survives(net)
    gain_too_small = opts.gain is not None and not result.survives
    if gain_too_small:
        bound = net.meta["certificate"]["bound"]
        result.warnings.append(
            f"with gain {opts.gain:g} the certified output error bound is {bound:g}, enough "
            "to misread an output: the soft network may not compute the rules (the file is "
            "written; raise the gain or use a tolerance)"
        )
    if report is not None and report.result == "different" and not gain_too_small:
        raise CompileError(
            f"{source.file}: the compiled network differs from its source "
            f"({len(report.counterexamples)} counterexample(s)); nothing was written"
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
        "options": opts.recorded(),
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

    A str is rule text (errors name it ``<rules>``); a str that looks like a file name
    (``"loan.rules"``) is refused with a message: pass ``Path("loan.rules")`` or call
    :func:`compile_file`.

    >>> net = compile_rules("input a, b, c\\nalarm = atleast(2, a, b, c)\\n")
    >>> net.evaluate([[1, 1, 0], [0, 0, 1]]).tolist()
    [[1.0], [0.0]]
    """
    if isinstance(source, os.PathLike):
        src = load_source(os.fspath(source))
    else:
        src = source_from_text(rule_text(source), "<rules>", kind="rules")
    return compile_source(src, **options).network


#: Suffixes of source files; a one-line string ending in one is taken for a file name.
SOURCE_SUFFIXES = (".rules", ".bench", ".blif", ".txt")


def rule_text(text: str, *, function: str = "compile_rules", file_function: str = "compile_file"
              ) -> str:
    """``text`` itself, unless it is a file name given where rule text was expected: then a
    UsageError that says how to pass the file.

    >>> rule_text("input a\\ny = a\\n") == "input a\\ny = a\\n"
    True
    >>> rule_text("loan.rules")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: loan.rules: compile_rules takes rule text, and ... \
call thresholdc.compile_file('loan.rules') or pass pathlib.Path('loan.rules')
    """
    if not isinstance(text, str):
        raise UsageError(f"{function} takes rule text (str) or a pathlib.Path, got "
                         f"{type(text).__name__}")
    name = text.strip()
    if "\n" not in name and name.lower().endswith(SOURCE_SUFFIXES):
        exists = "" if os.path.isfile(name) else " (no such file)"
        raise UsageError(
            f"{function} takes rule text, and {name!r} looks like a file name{exists}; to "
            f"read a file, call thresholdc.{file_function}({name!r}) or pass "
            f"pathlib.Path({name!r})", file=name)
    return text


def compile_file(path: str | os.PathLike[str], **options: Any) -> CompileResult:
    """Compile the rule file or netlist at ``path`` (a str or a ``Path``); returns the
    network with its summary (``.network``, ``.report``, ``.notes``, ``.warnings``).

    >>> import tempfile
    >>> p = os.path.join(tempfile.mkdtemp(), "lamp.rules")
    >>> _ = open(p, "w").write("input dark, motion\\nlamp = dark and motion\\n")
    >>> compile_file(p).network.output_names
    ('lamp',)
    """
    return compile_source(load_source(os.fspath(path)), **options)
