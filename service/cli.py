"""The ``nightjar`` command.

Each group of subcommands lives in its own module exposing
``register(subparsers)``; every subcommand sets ``func(args) -> int`` (the exit
code).  Input errors are printed as ``file:line:col`` messages, never as a
traceback.
"""

from __future__ import annotations

import argparse
import importlib
import sys

from worker.syntax.errors import InputError

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_UNDECIDED, EXIT_NO_SERVICE, EXIT_REGRESSION = 0, 1, 2, 3, 4, 5

COMMAND_MODULES = ("service.cli_check", "service.cli_prove",
                   "service.cli_client", "service.cli_corpus")


class UsageError(Exception):
    """A command used the wrong way (exit 2)."""


class _Parser(argparse.ArgumentParser):
    def error(self, message):          # argparse's own errors: exit 2
        self.print_usage(sys.stderr)
        print(f"nightjar: {message}", file=sys.stderr)
        raise SystemExit(EXIT_USAGE)

    def parse_known_args(self, args=None, namespace=None):
        ns, extra = super().parse_known_args(args, namespace)
        if extra and self._subparsers is None:
            # a command's own parser: what it does not know is its error, told
            # with its usage (argparse would leave it to the top-level parser,
            # whose usage names no command's options)
            self.error(f"unrecognized arguments: {' '.join(extra)}")
        return ns, extra


def input_error_text(e: InputError) -> str:
    """How the command line prints an input error: ``file:line:col: error:
    ...`` with the line and a caret; an error without a place (a file that
    cannot be opened at all) as one ``nightjar: ...`` line like the others."""
    if e.span is not None:
        return e.render()
    text = e.render()
    return "nightjar: " + (text[len("error: "):] if text.startswith("error: ") else text)


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="nightjar",
                     description="Batch theorem proving for first-order logic with equality.")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMAND_MODULES:
        importlib.import_module(name).register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return EXIT_USAGE
    try:
        return int(args.func(args) or 0)
    except InputError as e:
        print(input_error_text(e), file=sys.stderr)
        return EXIT_INPUT
    except UsageError as e:
        print(f"nightjar: {e}", file=sys.stderr)
        return EXIT_USAGE
    except KeyboardInterrupt:
        print("nightjar: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        return EXIT_OK


if __name__ == "__main__":
    sys.exit(main())
