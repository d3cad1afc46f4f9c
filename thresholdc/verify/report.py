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
    """What one method found for one output.

    ``verdict`` is ``equal`` (proven for this output), ``different`` (a counterexample was
    found and re-checked) or ``undecided``; ``disagreements`` is the exact number of
    disagreeing assignments where the method counts them, else None; ``found`` the number of
    counterexamples found; ``bound`` (undecided only) the bound the method reached.  A bare
    bool in place of ``verdict`` (older callers) reads as equal/different.
    """

    name: str
    verdict: str
    disagreements: int | None = None
    counterexamples: list[Counterexample] = field(default_factory=list)
    min_margin: float | None = None
    found: int | None = None
    bound: str | None = None

    def __post_init__(self) -> None:
        if isinstance(self.verdict, bool):
            self.verdict = "equal" if self.verdict else "different"
        assert self.verdict in ("equal", "different", "undecided"), self.verdict
        if self.found is None:
            self.found = len(self.counterexamples)

    @property
    def agrees(self) -> bool:
        """True only when equality was proven for this output."""
        return self.verdict == "equal"

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
