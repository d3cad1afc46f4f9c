"""The options of a compile, validated once, in one frozen value.

:class:`CompileOptions` holds every option of :func:`thresholdc.compile_rules` and of
``thresholdc compile``; building one checks every value and every combination, and an error
lists the valid values.  Each pass names the fields it honours (:data:`HONOURED`); an option
that the passes of a run cannot honour is refused (or, for a harmless default-like value, a
warning), never silently ignored.  The command line takes its defaults and choices from
:data:`CHOICES` and the field defaults.

The fields of the first group shape the network and are recorded in ``meta.options`` (in
this order, see :meth:`CompileOptions.recorded`); ``verify``, ``max_inputs`` and
``time_limit`` only decide how the result is checked.

>>> CompileOptions(activation="sigmoid").tolerance
0.01
>>> CompileOptions(cut_size=1)
Traceback (most recent call last):
...
thresholdc.errors.UsageError: The 'cut_size' option must be an integer from 2 to 10. \
Got 1 instead.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields
from typing import Any

from ..errors import UsageError
from .activations import ACTIVATIONS
from .network import ENCODINGS

__all__ = [
    "CompileOptions", "CHOICES", "HONOURED", "RECORDED", "DEFAULT_TOLERANCE",
    "VERIFY_METHODS",
]

#: The verification methods of a compile (``none``: do not verify).
VERIFY_METHODS = ("auto", "exhaustive", "local", "sat", "bounds", "milp", "none")
#: The tolerance of a sigmoid or tanh compile given neither a gain nor a tolerance.
DEFAULT_TOLERANCE = 0.01

#: The valid values of the options that take one of a list.
CHOICES: dict[str, tuple[str, ...]] = {
    "activation": tuple(a for a in ACTIVATIONS if a != "linear"),
    "encoding": ENCODINGS,
    "verify": VERIFY_METHODS,
}

#: The options recorded in ``meta.options`` of a compiled network, in their recorded order.
RECORDED = (
    "activation", "encoding", "gain", "tolerance", "layered", "synthesis",
    "simplify_support", "cut_size", "max_fan_in", "max_weight",
)

#: The fields each pass honours (the driver runs ``collapse`` or ``per-gate mapping``).
HONOURED: dict[str, tuple[str, ...]] = {
    "lowering": ("simplify_support",),
    "collapse": ("synthesis", "cut_size", "max_fan_in", "max_weight"),
    "per-gate mapping": ("synthesis",),
    "activation": ("activation", "encoding", "gain", "tolerance", "layered"),
    "verification": ("verify", "max_inputs", "time_limit"),
}


def _is_int(value: object) -> bool:
    return isinstance(value, int) and not isinstance(value, bool)


def _is_number(value: object) -> bool:
    return (isinstance(value, (int, float)) and not isinstance(value, bool)
            and math.isfinite(value))


def _fail(name: str, must: str, value: object) -> UsageError:
    return UsageError(f"The {name!r} option must be {must}. Got {value!r} instead.")


@dataclass(frozen=True)
class CompileOptions:
    """Every option of a compile (see the module docstring); invalid values raise UsageError.

    Examples
    --------
    >>> opts = CompileOptions(max_fan_in=3)
    >>> opts.recorded()["max_fan_in"], opts.verify
    (3, 'auto')
    >>> CompileOptions(activation="swish")  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    thresholdc.errors.UsageError: The 'activation' option must be one of step, sigmoid, \
tanh, relu. Got 'swish' instead.
    """

    activation: str = "step"
    encoding: str = "binary"
    gain: float | None = None
    tolerance: float | None = None
    layered: bool = False
    synthesis: bool = True
    simplify_support: int = 6
    cut_size: int = 6
    max_fan_in: int | None = None
    max_weight: int | None = None
    verify: str = "auto"
    max_inputs: int = 24
    time_limit: float = 60.0

    def __post_init__(self) -> None:
        for name, choices in CHOICES.items():
            if getattr(self, name) not in choices:
                raise _fail(name, f"one of {', '.join(choices)}", getattr(self, name))
        for name in ("layered", "synthesis"):
            if not isinstance(getattr(self, name), bool):
                raise _fail(name, "True or False", getattr(self, name))
        self._check_integers()
        self._check_activation()
        if self.activation in ("sigmoid", "tanh") and self.gain is None and self.tolerance is None:
            object.__setattr__(self, "tolerance", DEFAULT_TOLERANCE)
        if not self.synthesis:
            for name in ("max_fan_in", "max_weight"):
                if getattr(self, name) is not None:
                    raise UsageError(
                        f"The {name!r} option needs synthesis: the per-gate mapping "
                        "(synthesis off, --no-synthesis) builds each gate as it is and cannot "
                        f"limit it. Got {name}={getattr(self, name)!r} with synthesis=False."
                    )

    def _check_integers(self) -> None:
        if not (_is_int(self.cut_size) and 2 <= self.cut_size <= 10):
            raise _fail("cut_size", "an integer from 2 to 10", self.cut_size)
        if self.max_fan_in is not None and not (_is_int(self.max_fan_in)
                                                and self.max_fan_in >= 2):
            raise _fail("max_fan_in", "an integer of at least 2 or None", self.max_fan_in)
        if self.max_weight is not None and not (_is_int(self.max_weight)
                                                and self.max_weight >= 1):
            raise _fail("max_weight", "an integer of at least 1 or None", self.max_weight)
        for name in ("simplify_support", "max_inputs"):
            value = getattr(self, name)
            if not (_is_int(value) and value >= 0):
                raise _fail(name, "a non-negative integer", value)
        if not (_is_number(self.time_limit) and self.time_limit > 0):
            raise _fail("time_limit", "a positive number of seconds", self.time_limit)

    def _check_activation(self) -> None:
        """The combinations of activation, encoding, gain and tolerance."""
        activation, encoding = self.activation, self.encoding
        if activation == "tanh" and encoding != "bipolar":
            raise UsageError("--activation tanh requires --encoding bipolar")
        if encoding == "bipolar" and activation not in ("tanh", "step"):
            raise UsageError(
                f"--encoding bipolar works with --activation tanh or step, not {activation}"
            )
        if activation in ("step", "relu"):
            if self.gain is not None:
                raise UsageError(f"--gain applies to sigmoid and tanh, not to {activation}")
            if self.tolerance is not None:
                raise UsageError(f"--tolerance applies to sigmoid and tanh, not to {activation}")
            return
        if self.gain is not None and self.tolerance is not None:
            raise UsageError("give either --gain or --tolerance, not both")
        if self.gain is not None and not (_is_number(self.gain) and self.gain > 0):
            raise UsageError(f"--gain must be a positive number, got {self.gain!r}")
        if self.tolerance is not None and not (
            _is_number(self.tolerance) and 0 < self.tolerance < 0.5
        ):
            raise UsageError(
                f"--tolerance must be between 0 and 0.5 (exclusive), got {self.tolerance!r}"
            )

    @classmethod
    def from_keywords(cls, **given: Any) -> CompileOptions:
        """Options from keyword arguments; an unknown keyword is refused, listing the valid.

        >>> CompileOptions.from_keywords(fan_in=2)  # doctest: +ELLIPSIS
        Traceback (most recent call last):
        ...
        thresholdc.errors.UsageError: unknown option(s) fan_in; valid options: ...
        """
        names = [f.name for f in fields(cls)]
        unknown = sorted(set(given) - set(names))
        if unknown:
            raise UsageError(
                f"unknown option(s) {', '.join(unknown)}; valid options: {', '.join(names)}"
            )
        return cls(**given)

    @classmethod
    def default(cls, name: str) -> Any:
        """The default value of field ``name`` (for the command line).

        >>> CompileOptions.default("cut_size")
        6
        """
        return {f.name: f.default for f in fields(cls)}[name]

    def recorded(self) -> dict[str, Any]:
        """The options recorded in ``meta.options``, in their recorded order."""
        return {name: getattr(self, name) for name in RECORDED}

    def ignored_by(self, passes: tuple[str, ...]) -> list[str]:
        """Fields set away from their defaults that none of ``passes`` honours.

        >>> CompileOptions(synthesis=False, cut_size=8).ignored_by(
        ...     ("lowering", "per-gate mapping", "activation", "verification"))
        ['cut_size']
        """
        honoured = {name for p in passes for name in HONOURED[p]}
        return [f.name for f in fields(self)
                if f.name not in honoured and getattr(self, f.name) != f.default]
