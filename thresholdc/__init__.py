"""thresholdc: compile rule logic into verified threshold neural networks.

>>> import thresholdc
>>> net = thresholdc.compile_rules("input a, b\\nboth = a and b\\n")
>>> net.evaluate([[1, 1], [1, 0]]).tolist()
[[1.0], [0.0]]
>>> thresholdc.verify(net, "input a, b\\nboth = a and b\\n").result
'equal'
"""

from __future__ import annotations

from .api import figure, load, verify  # noqa: E402
from .compiler import CompileResult, compile_file, compile_rules, compile_source  # noqa: E402
from .errors import (  # noqa: E402
    DataError,
    NetworkFileError,
    RuleError,
    ThresholdcError,
    UsageError,
    VerificationUndecided,
)
from .export import load_any, save_any  # noqa: E402
from .htmlreport import report_html, write_report  # noqa: E402  (also registers displays)
from .ir.network import Network, Neuron, Output  # noqa: E402
from .ir.options import CompileOptions  # noqa: E402
from .ir.reference import Reference
from .logic import load_source, source_from_text
from .network import apply_activation, to_relu
from .syntax import parse_bench, parse_blif
from .synth import MAX_VARIABLES, Realisation, is_threshold  # noqa: E402
from .synth.identify import identify  # noqa: E402
from .train import TrainResult, load_data, score, train  # noqa: E402
from .verification import (
    CertificateCheck,
    Report,
    check_certificate,
    verify_bounds,
    verify_local,
    verify_network,
    verify_sat,
    verify_typed,
)
from .version import __version__  # noqa: E402

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
