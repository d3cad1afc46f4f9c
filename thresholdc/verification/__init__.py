"""The verify stage: does a network compute its reference (rule file or netlist)?"""

from .auto import METHODS, merge_reports, verify_network
from .bounds import verify_bounds
from .certificate import CertificateCheck, check_certificate
from .definitions import DefinitionBackend, by_method, definition_units, verify_definitions
from .domain import boolean_or_typed_domain, check_names, network_rows
from .exhaustive import DEFAULT_MAX_INPUTS, verify_exhaustive
from .local import verify_local
from .report import Counterexample, OutputReport, Report, combined_result, undecided_outputs
from .retention import retained_definitions
from .sat import verify_sat
from .sat.typed import verify_typed_sat
from .trained import verify_trained
from .typed import verify_typed

__all__ = [
    "METHODS", "verify_network", "verify_bounds", "CertificateCheck", "check_certificate",
    "DEFAULT_MAX_INPUTS", "verify_exhaustive", "verify_local", "Counterexample",
    "OutputReport", "Report", "verify_sat", "verify_typed", "verify_typed_sat",
    "merge_reports", "combined_result", "undecided_outputs", "verify_definitions",
    "definition_units", "by_method", "DefinitionBackend",
    "boolean_or_typed_domain", "check_names", "network_rows",
    "verify_trained", "retained_definitions",
]
