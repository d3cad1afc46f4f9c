"""thresholdc: compile rule logic into verified threshold neural networks.

The public names below load on first use (PEP 562): ``import thresholdc`` costs only this
module, and ``thresholdc.compile_rules`` imports the compiler the first time it is read.

>>> import thresholdc
>>> net = thresholdc.compile_rules("input a, b\\nboth = a and b\\n")
>>> net.evaluate([[1, 1], [1, 0]]).tolist()
[[1.0], [0.0]]
>>> thresholdc.verify(net, "input a, b\\nboth = a and b\\n").result
'equal'
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

from .present import DISPLAY
from .version import __version__

if TYPE_CHECKING:  # the same names, seen eagerly by type checkers and IDEs
    from .api import figure, load, verify
    from .compiler import CompileResult, compile_file, compile_rules, compile_source
    from .errors import (
        DataError,
        NetworkFileError,
        RuleError,
        ThresholdcError,
        UsageError,
        VerificationUndecided,
    )
    from .explain import Diff, diff, read_units
    from .export import load_any, save_any
    from .htmlreport import report_html, write_report
    from .ir.network import Network, Neuron, Output
    from .ir.options import CompileOptions
    from .ir.reference import Reference
    from .logic import load_source, source_from_text
    from .network import apply_activation, to_relu
    from .syntax import parse_bench, parse_blif
    from .synth import MAX_VARIABLES, Realisation, is_threshold
    from .synth.identify import identify
    from .training import TrainOptions, TrainResult, load_data, rule_network, score, train
    from .verification import (
        CertificateCheck,
        Report,
        check_certificate,
        retained_definitions,
        verify_bounds,
        verify_local,
        verify_network,
        verify_sat,
        verify_trained,
        verify_typed,
    )

#: Public name -> the module (relative to this package) that defines it.
_LAZY: dict[str, str] = {
    "compile_rules": "compiler",
    "compile_source": "compiler",
    "compile_file": "compiler",
    "CompileResult": "compiler",
    "CompileOptions": "ir.options",
    "load": "api",
    "figure": "api",
    "report_html": "htmlreport",
    "write_report": "htmlreport",
    "save_any": "export",
    "load_any": "export",
    "verify": "api",
    "verify_bounds": "verification",
    "verify_network": "verification",
    "verify_local": "verification",
    "verify_sat": "verification",
    "parse_bench": "syntax",
    "parse_blif": "syntax",
    "verify_typed": "verification",
    "diff": "explain",
    "Diff": "explain",
    "read_units": "explain",
    "verify_trained": "verification",
    "retained_definitions": "verification",
    "load_source": "logic",
    "source_from_text": "logic",
    "identify": "synth.identify",
    "is_threshold": "synth",
    "Realisation": "synth",
    "MAX_VARIABLES": "synth",
    "Reference": "ir.reference",
    "Network": "ir.network",
    "Neuron": "ir.network",
    "Output": "ir.network",
    "Report": "verification",
    "train": "training",
    "TrainResult": "training",
    "TrainOptions": "training",
    "rule_network": "training",
    "load_data": "training",
    "score": "training",
    "apply_activation": "network",
    "to_relu": "network",
    "check_certificate": "verification",
    "CertificateCheck": "verification",
    "ThresholdcError": "errors",
    "RuleError": "errors",
    "NetworkFileError": "errors",
    "DataError": "errors",
    "UsageError": "errors",
    "VerificationUndecided": "errors",
}

__all__ = [
    "__version__",
    "compile_rules",
    "compile_source",
    "compile_file",
    "CompileResult",
    "CompileOptions",
    "load",
    "figure",
    "report_html",
    "write_report",
    "save_any",
    "load_any",
    "verify",
    "verify_bounds",
    "verify_network",
    "verify_local",
    "verify_sat",
    "parse_bench",
    "parse_blif",
    "verify_typed",
    "diff",
    "Diff",
    "read_units",
    "verify_trained",
    "retained_definitions",
    "load_source",
    "source_from_text",
    "identify",
    "is_threshold",
    "Realisation",
    "MAX_VARIABLES",
    "Reference",
    "Network",
    "Neuron",
    "Output",
    "Report",
    "train",
    "TrainResult",
    "TrainOptions",
    "rule_network",
    "load_data",
    "score",
    "apply_activation",
    "to_relu",
    "check_certificate",
    "CertificateCheck",
    "ThresholdcError",
    "RuleError",
    "NetworkFileError",
    "DataError",
    "UsageError",
    "VerificationUndecided",
]


if not TYPE_CHECKING:  # hidden from type checkers, so that a misspelt name stays an error

    def __getattr__(name: str) -> Any:
        """Import the module behind a public name on first use and keep the name here."""
        module = _LAZY.get(name)
        if module is None:
            raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
        value = getattr(importlib.import_module(f".{module}", __name__), name)
        globals()[name] = value  # later reads skip this function
        return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))


def _display(renderer: str) -> Any:
    """A notebook renderer that loads :mod:`thresholdc.htmlreport` only when first shown."""

    def show(obj: Any) -> Any:
        return getattr(importlib.import_module(".htmlreport", __name__), renderer)(obj)

    return show


# Networks and reports find their notebook displays here; importing htmlreport replaces these
# stand-ins with its own functions.
for _key, _renderer in (("network_html", "network_card"), ("network_svg", "network_svg"),
                        ("report_html", "report_card")):
    DISPLAY.setdefault(_key, _display(_renderer))
del _key, _renderer
