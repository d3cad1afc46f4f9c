"""thresholdc: compile rule logic into verified threshold neural networks.

>>> import thresholdc
>>> net = thresholdc.compile_rules("input a, b\\nboth = a and b\\n")
>>> net.evaluate([[1, 1], [1, 0]]).tolist()
[[1.0], [0.0]]
>>> thresholdc.verify(net, "input a, b\\nboth = a and b\\n").result
'equal'
"""

from __future__ import annotations

__version__ = "0.1.0"

from .api import load, verify  # noqa: E402
from .compiler import CompileResult, compile_file, compile_rules, compile_source  # noqa: E402
from .errors import (  # noqa: E402
    DataError,
    NetworkFileError,
    RuleError,
    ThresholdcError,
    UsageError,
    VerificationUndecided,
)
from .explain import Diff, diff, read_units  # noqa: E402
from .export import load_any, save_any  # noqa: E402
from .network.model import Network, Neuron, Output  # noqa: E402
from .network.relu import to_relu  # noqa: E402
from .network.soften import apply_activation  # noqa: E402
from .source import Source, load_source  # noqa: E402
from .syntax.importers import parse_bench, parse_blif  # noqa: E402
from .synth.identify import MAX_VARIABLES, Realisation, identify, is_threshold  # noqa: E402
from .training import TrainOptions, TrainResult, load_data, rule_network, score, train  # noqa: E402
from .verify.auto import verify_network  # noqa: E402
from .verify.bounds import verify_bounds  # noqa: E402
from .verify.certificate import CertificateCheck, check_certificate  # noqa: E402
from .verify.local import verify_local  # noqa: E402
from .verify.report import Report  # noqa: E402
from .verify.sat import verify_sat  # noqa: E402
from .verify.typed import verify_typed  # noqa: E402

__all__ = [
    "__version__",
    "compile_rules",
    "compile_source",
    "compile_file",
    "CompileResult",
    "load",
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
    "load_source",
    "identify",
    "is_threshold",
    "Realisation",
    "MAX_VARIABLES",
    "Source",
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
