"""The verification report shared by every method (exhaustive, SAT, local, bounds).

``Report.to_dict()`` is the ``verify --json`` layout::

    {"result": "equal" | "different" | "undecided", "method": …, "assignments": N,
     "outputs": [{"name": …, "agrees": bool, "disagreements": count,
                  "counterexamples": [up to 5 assignments], "min_margin": …}], …}

``disagreements`` is an exact count where the method counts (exhaustive), else the number of
counterexamples found; ``min_margin`` is the smallest |value − decision threshold|-style margin
the method saw on that output (pre-activation of the output neuron for step networks), or None.

>>> r = Report("equal", "exhaustive", 4, [OutputReport("y", True, 0, [], 0.5)])
>>> r.equal, r.to_dict()["outputs"][0]["min_margin"]
(True, 0.5)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from ..ir.network import DISPLAY

__all__ = ["Counterexample", "OutputReport", "Report", "MAX_COUNTEREXAMPLES"]

MAX_COUNTEREXAMPLES = 5


@dataclass
class Counterexample:
    """An input assignment on which the network and the rules disagree on ``output``."""

    assignment: dict[str, Any]
    output: str
    expected: bool
    actual: float
    margin: float | None = None

    def to_dict(self) -> dict[str, Any]:
        return {
            "assignment": self.assignment,
            "output": self.output,
            "expected": int(self.expected),
            "actual": self.actual,
            "margin": self.margin,
        }


@dataclass
class OutputReport:
    """What one method found for one output."""

    name: str
    agrees: bool
    disagreements: int
    counterexamples: list[Counterexample] = field(default_factory=list)
    min_margin: float | None = None

    def to_dict(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "agrees": self.agrees,
            "disagreements": self.disagreements,
            "counterexamples": [c.assignment for c in self.counterexamples],
            "min_margin": self.min_margin,
        }


@dataclass
class Report:
    """The verdict of a verification and its evidence.

    ``result`` is ``equal`` (proven equal), ``different`` (a counterexample exists) or
    ``undecided`` (no method decided within its bounds); ``proofs`` lists, per method that
    ran, what it established (e.g. ``"local: every neuron equals its cone"``); ``notes`` holds
    caveats printed with the report (bands excluded around real thresholds, assumed margins…);
    ``seconds`` is the wall time, printed but never stored in a network file.
    """

    result: str
    method: str
    assignments: int
    outputs: list[OutputReport]
    proofs: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    seconds: float = 0.0

    @property
    def equal(self) -> bool:
        return self.result == "equal"

    @property
    def counterexamples(self) -> list[Counterexample]:
        """Every counterexample, output by output."""
        return [c for o in self.outputs for c in o.counterexamples]

    def record(self) -> dict[str, Any]:
        """The entry stored in a network file's ``meta.verification`` (no times)."""
        result = {"equal": "equal", "different": "different"}.get(self.result, "skipped")
        return {"method": self.method, "result": result}

    def to_dict(self) -> dict[str, Any]:
        return {
            "result": self.result,
            "method": self.method,
            "assignments": self.assignments,
            "outputs": [o.to_dict() for o in self.outputs],
            "counterexamples": [c.to_dict() for c in self.counterexamples],
            "proofs": list(self.proofs),
            "notes": list(self.notes),
            "seconds": round(self.seconds, 6),
        }

    def _repr_html_(self) -> str | None:
        """Notebook display: the verdict and a table per output (see thresholdc.htmlreport)."""
        show = DISPLAY.get("report_html")
        return show(self) if show else None
