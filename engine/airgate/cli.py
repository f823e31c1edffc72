"""Command line: ``airgate check | compare | explain | import | plot | rules | schema | template``.

Each command lives in :mod:`airgate.commands` (``register`` adds its arguments, ``run`` does it).
Exit codes: 0 all pass, 1 a failing finding, 2 input or usage error, 3 internal error.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys
from collections.abc import Sequence

from airgate import __version__
from airgate.commands import COMMANDS
from airgate.writers.output import Interrupted
from airgate.errors import EXIT_INPUT, AirgateError, OutputError
from airgate.escaping import terminal

EXIT_INTERNAL = 3


def _modules():
    return {name: importlib.import_module(f"airgate.commands.{name}") for name in COMMANDS}


def _parser(modules) -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="airgate",
        description="Check a building's ventilation schedule against a rule pack of a published "
                    "ventilation rate procedure.",
        epilog="Exit codes: 0 all pass, 1 failing findings, 2 input or usage error, "
               "3 internal error.")
    p.add_argument("--version", action="version", version=f"airgate {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", help="what to do (airgate COMMAND "
                                                                   "--help tells more)")
    for module in modules.values():
        module.register(sub)
    return p


def parser() -> argparse.ArgumentParser:
    """The whole argument parser (every command and its arguments)."""
    return _parser(_modules())


def run(argv: Sequence[str] | None = None) -> int:
    modules = _modules()
    parser = _parser(modules)
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help(sys.stderr)
        return EXIT_INPUT
    return modules[args.command].run(args)


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``airgate`` console script; never shows a traceback for bad input."""
    try:
        return run(argv)
    except BrokenPipeError as exc:
        # the reader of standard output left: the report is incomplete, so the run cannot pass
        _quiet_stdout()
        sys.stderr.write(_pipe_error(exc).render() + "\n")
        return EXIT_INPUT
    except AirgateError as exc:
        if isinstance(exc, OutputError) and getattr(exc, "path", None) == "-":
            _quiet_stdout()
        sys.stderr.write(exc.render() + "\n")
        return exc.exit_code
    except KeyboardInterrupt:
        sys.stderr.write("airgate: interrupted\n")
        return EXIT_INPUT
    except Interrupted as exc:  # temporary files are already removed
        sys.stderr.write(f"airgate: stopped by signal {exc.signum}; no file was replaced\n")
        return exc.exit_code
    except Exception as exc:  # a bug: say so briefly; AIRGATE_DEBUG=1 shows the traceback
        if os.environ.get("AIRGATE_DEBUG"):
            raise
        detail = terminal(exc)  # it may quote input: escaped, and short
        detail = detail if len(detail) <= 300 else detail[:300] + " …(cut)"
        sys.stderr.write(f"airgate: internal error: {type(exc).__name__}: {detail}\n"
                         "  this is a bug in airgate; rerun with AIRGATE_DEBUG=1 and report it\n")
        return EXIT_INTERNAL


def _pipe_error(exc: OSError) -> OutputError:
    from airgate.writers.output import STDOUT, write_error

    return write_error(STDOUT, exc)


def _quiet_stdout() -> None:
    """Point standard output at /dev/null so the interpreter's final flush of a closed pipe
    does not print a second error (Python docs, "Note on SIGPIPE")."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError, AttributeError):
        pass  # no file descriptor (a test's captured stdout): nothing to flush


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
