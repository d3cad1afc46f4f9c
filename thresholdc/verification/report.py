"""The verification report shared by every method (exhaustive, SAT, local, bounds, typed).

Every output gets its own verdict, and a verdict is only ever what the method proved:

* ``equal``: proven equal to the rules on every (valid) input; ``disagreements`` is 0;
* ``different``: at least one counterexample was found and re-checked on both sides;
  ``disagreements`` is the exact number of disagreeing assignments when the method counted
  them all (exhaustive enumeration, a finished branch-and-bound over a finite domain), else
  None; ``found`` is the number of counterexamples the method found;
* ``undecided``: neither was shown; ``bound`` says which bound stopped the method (a time
  limit, a cone that could not be proven, …).

A report's ``result`` is ``equal`` when every output is equal, ``different`` when some output
is different, else ``undecided``; the constructor checks this.  ``Report.to_dict()`` is the
``verify --json`` layout::

    {"result": "equal" | "different" | "undecided", "method": …, "assignments": N,
     "outputs": [{"name": …, "verdict": …, "agrees": bool, "disagreements": int | null,
                  "found": int, "counterexamples": [up to 5 assignments],
                  "min_margin": …, "min_value_distance": … | null, "bound": str | null}],
     …}

``agrees`` is kept for older readers: true only for a proven ``equal``.

**Margin** has one meaning everywhere (reports, counterexamples, ``verify``, ``inspect``,
the HTML report, the API): the distance of the output unit's *pre-activation* from its
decision point, ``|z|`` with ``z = Σ w·x + b`` as the network stores it (the output reads
true when ``z > 0``), whatever the activation.  For a step network compiled from rules that is
in units of the integer weights (the compiler guarantees ``|z| ≥ 0.5``); a soft network's
weights hold its gain, so its ``z`` is the gain times that.  An output that reads an input
unit directly has margin 0.5 (a 0/1 value's distance from 0.5).  ``min_margin`` is the
smallest margin the method saw (a certified lower bound for branch-and-bound), or None.
For a soft (sigmoid, tanh, ReLU, linear) output, ``min_value_distance`` is the smallest
``|value − decision threshold|`` of its *output value*, the quantity an error budget on the
outputs bounds (None for step outputs, where it is always 0.5).

>>> r = Report("equal", "exhaustive", 4, [OutputReport.proven("y", 0.5)])
>>> r.equal, r.outputs[0].agrees, r.to_dict()["outputs"][0]["verdict"]
(True, True, 'equal')
>>> OutputReport.undecided("z", "sat: time limit of 1 s").agrees
False
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from typing import Any

from ..present import DISPLAY

__all__ = ["Counterexample", "OutputReport", "Report", "MAX_COUNTEREXAMPLES", "VERDICTS",
           "combined_result", "undecided_outputs"]

MAX_COUNTEREXAMPLES = 5
VERDICTS = ("equal", "different", "undecided")


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
    """What one method established for one output (see the module docstring).

    Build one with :meth:`proven`, :meth:`differs` or :meth:`undecided`; the constructor
    refuses inconsistent fields (an internal error, not a user one).
    """

    name: str
    verdict: str
    disagreements: int | None = None
    found: int = 0
    counterexamples: list[Counterexample] = field(default_factory=list)
    min_margin: float | None = None
    bound: str | None = None
    min_value_distance: float | None = None

    def __post_init__(self) -> None:
        if self.verdict not in VERDICTS:
            raise ValueError(f"unknown verdict {self.verdict!r}")
        if self.verdict == "equal":
            if self.disagreements not in (None, 0) or self.found or self.counterexamples:
                raise ValueError(f"output {self.name!r}: 'equal' with counterexamples")
            self.disagreements = 0
            self.bound = None
        elif self.verdict == "different":
            if self.found < 1 or (self.disagreements is not None and self.disagreements < 1):
                raise ValueError(f"output {self.name!r}: 'different' without a counterexample")
            self.bound = None
        elif self.disagreements is not None or self.found or self.counterexamples:
            raise ValueError(f"output {self.name!r}: 'undecided' with a count")

    @property
    def agrees(self) -> bool:
        """True only when the output is proven equal."""
        return self.verdict == "equal"

    @property
    def exact(self) -> bool:
        """Whether ``disagreements`` is an exact count (equal outputs: exactly 0)."""
        return self.disagreements is not None

    @classmethod
    def proven(cls, name: str, min_margin: float | None = None, *,
               value_distance: float | None = None) -> OutputReport:
        """A proven-equal output."""
        return cls(name, "equal", 0, 0, [], min_margin, None, value_distance)

    @classmethod
    def differs(
        cls,
        name: str,
        counterexamples: Sequence[Counterexample],
        *,
        disagreements: int | None = None,
        found: int | None = None,
        min_margin: float | None = None,
        value_distance: float | None = None,
    ) -> OutputReport:
        """A different output: up to :data:`MAX_COUNTEREXAMPLES` are kept; ``found`` defaults
        to the exact count, else the number of counterexamples given."""
        examples = list(counterexamples)
        if found is None:
            found = disagreements if disagreements is not None else len(examples)
        return cls(name, "different", disagreements, found, examples[:MAX_COUNTEREXAMPLES],
                   min_margin, None, value_distance)

    @classmethod
    def undecided(cls, name: str, bound: str) -> OutputReport:
        """An output the method could not decide; ``bound`` says what stopped it."""
        return cls(name, "undecided", None, 0, [], None, bound)

    @classmethod
    def counted(
        cls,
        name: str,
        disagreements: int,
        counterexamples: Sequence[Counterexample],
        min_margin: float | None = None,
        value_distance: float | None = None,
    ) -> OutputReport:
        """The verdict of a method that counted every disagreement exactly."""
        if disagreements == 0:
            return cls.proven(name, min_margin, value_distance=value_distance)
        return cls.differs(name, counterexamples, disagreements=disagreements,
                           min_margin=min_margin, value_distance=value_distance)

    def to_dict(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "verdict": self.verdict,
            "agrees": self.agrees,
            "disagreements": self.disagreements,
            "found": self.found,
            "counterexamples": [c.assignment for c in self.counterexamples],
            "min_margin": self.min_margin,
            "min_value_distance": self.min_value_distance,
            "bound": self.bound,
        }


def combined_result(outputs: Iterable[OutputReport]) -> str:
    """``different`` if any output differs, ``equal`` if all are equal, else ``undecided``.

    >>> combined_result([OutputReport.proven("a"), OutputReport.undecided("b", "x")])
    'undecided'
    """
    verdicts = {o.verdict for o in outputs}
    if "different" in verdicts:
        return "different"
    if verdicts == {"equal"}:
        return "equal"
    return "undecided"


def undecided_outputs(names: Iterable[str], bound: str) -> list[OutputReport]:
    """Every output undecided for the same reason.

    >>> [o.verdict for o in undecided_outputs(["a", "b"], "no cone records")]
    ['undecided', 'undecided']
    """
    return [OutputReport.undecided(name, bound) for name in names]


@dataclass
class Report:
    """The verdict of a verification and its evidence.

    ``result`` is ``equal`` (proven equal), ``different`` (a counterexample exists) or
    ``undecided``; it must agree with the per-output verdicts (an empty ``outputs`` is only
    allowed for ``undecided``).  ``proofs`` lists, per method that ran, what it established
    (e.g. ``"local: every neuron equals its cone"``); ``notes`` holds caveats printed with the
    report (bands excluded around real thresholds, assumed margins…); ``seconds`` is the wall
    time, printed but never stored in a network file.
    """

    result: str
    method: str
    assignments: int
    outputs: list[OutputReport]
    proofs: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    seconds: float = 0.0

    def __post_init__(self) -> None:
        if self.result not in VERDICTS:
            raise ValueError(f"unknown result {self.result!r}")
        if self.outputs:
            want = combined_result(self.outputs)
            if want != self.result:
                raise ValueError(f"report result {self.result!r} but the outputs say {want!r}")
        elif self.result != "undecided":
            raise ValueError(f"a {self.result!r} report must list its outputs")

    @classmethod
    def of(cls, method: str, assignments: int, outputs: list[OutputReport],
           **rest: Any) -> Report:
        """A report whose result is combined from ``outputs``.

        >>> Report.of("sat", 0, [OutputReport.proven("y")]).result
        'equal'
        """
        return cls(combined_result(outputs), method, assignments, outputs, **rest)

    @property
    def equal(self) -> bool:
        return self.result == "equal"

    @property
    def counterexamples(self) -> list[Counterexample]:
        """Every counterexample, output by output."""
        return [c for o in self.outputs for c in o.counterexamples]

    def verdicts(self) -> dict[str, str]:
        """``{output: verdict}``.

        >>> Report.of("sat", 0, [OutputReport.proven("y")]).verdicts()
        {'y': 'equal'}
        """
        return {o.name: o.verdict for o in self.outputs}

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
