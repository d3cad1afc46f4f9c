"""The ``thresholdc`` command line: argument parsing and printing only.

Each subcommand lives in :mod:`thresholdc.commands` as a module with ``register(subparsers)``
and ``run(args) -> int``.  Exit codes: 0 success, 1 a check ran and failed, 2 bad input or usage.
User errors (:class:`~thresholdc.errors.ThresholdcError`) are printed in the format of
DESIGN.md §3 and never as a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
from collections.abc import Sequence

from . import __version__, progress
from .errors import ThresholdcError

__all__ = ["main", "build_parser", "COMMANDS"]

# Subcommand modules, in the order ``--help`` lists them.
COMMANDS = ("compile", "verify", "inspect", "table", "export", "draw", "train", "score",
            "diff")


class _Parser(argparse.ArgumentParser):
    """An ArgumentParser whose errors follow thresholdc's one-line format (exit 2)."""

    def error(self, message: str) -> None:  # type: ignore[override]
        sys.stderr.write(f"thresholdc: error: {message} (see '{self.prog} --help')\n")
        raise SystemExit(2)


def build_parser() -> argparse.ArgumentParser:
    """The top-level parser with every available subcommand registered."""
    parser = _Parser(
        prog="thresholdc",
        description="Compile rule logic into verified threshold neural networks.",
        epilog="Run 'thresholdc COMMAND --help' for a command's options and an example.",
    )
    parser.add_argument("--version", action="version", version=f"thresholdc {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True
    for name in COMMANDS:
        try:
            module = importlib.import_module(f".commands.{name}", __package__)
        except ModuleNotFoundError as exc:
            if exc.name and exc.name.endswith(f"commands.{name}"):
                continue  # a command not built yet
            raise
        module.register(sub)
        sub.choices[name].set_defaults(run=module.run)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit code (also used by ``python -m thresholdc``)."""
    parser = build_parser()
    args = parser.parse_args(argv)
    progress.enabled(not getattr(args, "json", False))
    try:
        return int(args.run(args))
    except ThresholdcError as err:
        sys.stderr.write(err.render() + "\n")
        return err.exit_code
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
        sys.stderr.write(
            f"thresholdc: internal error: {type(exc).__name__}: {exc} "
            "(set THRESHOLDC_DEBUG=1 to see the traceback)\n"
        )
        return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
