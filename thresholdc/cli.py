"""The ``thresholdc`` command line: argument parsing and printing only.

Each subcommand lives in :mod:`thresholdc.commands` as a module with ``register(subparsers)``
and ``run(args) -> int``; only the module of the command being run is imported (the top-level
``--help`` lists the commands from their summaries), so start-up pays for one command.

Exit codes: 0 success, 1 a check ran and failed, 2 bad input or usage, 3 a bug in thresholdc
(an internal error).  User errors (:class:`~thresholdc.errors.ThresholdcError`) are printed
in the format of DESIGN.md §3 and never as a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
from collections.abc import Iterable, Sequence

from . import __version__, progress
from .commands import SUMMARY
from .errors import InternalError, ThresholdcError, internal_message

__all__ = ["main", "build_parser", "COMMANDS"]

# Subcommand modules, in the order ``--help`` lists them.
# The exit code of a bug in thresholdc (0, 1 and 2 are DESIGN.md §5's).
INTERNAL_ERROR = 3

COMMANDS = tuple(SUMMARY)


class _Parser(argparse.ArgumentParser):
    """An ArgumentParser whose errors follow thresholdc's one-line format (exit 2)."""

    def error(self, message: str) -> None:  # type: ignore[override]
        sys.stderr.write(f"thresholdc: error: {message} (see '{self.prog} --help')\n")
        raise SystemExit(2)


def build_parser(commands: Iterable[str] | None = None) -> argparse.ArgumentParser:
    """The top-level parser: the commands named in ``commands`` (default: all) with their full
    options, imported from :mod:`thresholdc.commands`; the others with their summary only
    (enough for the top-level ``--help``; running one needs it registered in full)."""
    full = set(COMMANDS if commands is None else commands)
    parser = _Parser(
        prog="thresholdc",
        description="Compile rule logic into verified threshold neural networks.",
        epilog="Run 'thresholdc COMMAND --help' for a command's options and an example.",
    )
    parser.add_argument("--version", action="version", version=f"thresholdc {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True
    for name in COMMANDS:
        if name not in full:
            sub.add_parser(name, help=SUMMARY[name])
            continue
        try:
            module = importlib.import_module(f".commands.{name}", __package__)
        except ModuleNotFoundError as exc:
            if exc.name and exc.name.endswith(f"commands.{name}"):
                continue  # a command not built yet
            raise
        module.register(sub)
        sub.choices[name].set_defaults(run=module.run)
    return parser


#: Parsers by the one command registered in full (None: none, for the top-level --help), built
#: once per process: in-process callers (tests, fuzzing) run ``main`` often.
_PARSER: dict[str | None, argparse.ArgumentParser] = {}


def _command(argv: Sequence[str]) -> str | None:
    """The command ``argv`` names: its first word that is not an option (the top-level options
    take no value), if that is a command."""
    word = next((a for a in argv if not a.startswith("-")), None)
    return word if word in SUMMARY else None


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit code (also used by ``python -m thresholdc``)."""
    argv = sys.argv[1:] if argv is None else list(argv)
    name = _command(argv)
    if name not in _PARSER:
        _PARSER[name] = build_parser(() if name is None else (name,))
    args = _PARSER[name].parse_args(argv)
    progress.enabled(not getattr(args, "json", False))
    try:
        return int(args.run(args))
    except ThresholdcError as err:
        sys.stderr.write(err.render() + "\n")
        return err.exit_code
    except InternalError as err:
        if os.environ.get("THRESHOLDC_DEBUG"):
            raise
        sys.stderr.write(err.render() + "\n")
        return INTERNAL_ERROR
    except KeyboardInterrupt:
        sys.stderr.write("thresholdc: interrupted\n")
        return 130
    except BrokenPipeError:
        return 0
    except MemoryError:
        sys.stderr.write("thresholdc: error: out of memory (try a smaller bound or input)\n")
        return 2
    except Exception as exc:  # a bug: one line, the traceback only on request
        if os.environ.get("THRESHOLDC_DEBUG"):
            raise
        sys.stderr.write(internal_message(
            f"{type(exc).__name__}: {exc}; set THRESHOLDC_DEBUG=1 to see the traceback") + "\n")
        return INTERNAL_ERROR


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
