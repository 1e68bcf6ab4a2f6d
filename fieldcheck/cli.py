"""Command line: `fieldcheck [--db PATH]` opens the interface; subcommands do the rest.

Thin on purpose: parse arguments, call the library, print. Errors the user can fix are one
sentence on stderr and exit code 2, never a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import re
import sys

from fieldcheck.commands import COMMANDS
from fieldcheck.commands.usage import (
    UsageError,
    clean,
    db_path,
    is_sqlite_error,
    set_message_units,
    store_error_sentence,
)


class _Version(argparse.Action):
    """--version: fieldcheck, its engine and the edition of every reference table (read only
    when asked, so other commands never pay for reading the tables)."""

    def __init__(self, option_strings, dest=argparse.SUPPRESS, **kw):
        super().__init__(option_strings, dest, nargs=0, default=argparse.SUPPRESS, **kw)

    def __call__(self, parser, namespace, values, option_string=None):
        from fieldcheck.commands.about import version_text

        print(version_text())
        parser.exit(0)


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> None:  # one sentence, exit 2 (argparse's own code too)
        self.exit(2, f"fieldcheck: {clean(message)}. See `{self.prog} --help`.\n")


def build_parser(only: str | None = None) -> argparse.ArgumentParser:
    p = _Parser(
        prog="fieldcheck",
        description="Rate existing timber posts and temporary wood shores on site. A screening aid "
        "for a competent person: local codes, the authority having jurisdiction and a licensed "
        "engineer govern.",
    )
    p.add_argument(
        "--version", action=_Version, help="print the version, the engine and the reference data"
    )
    p.add_argument("--db", metavar="PATH", help="survey log to open (default: your data folder)")
    p.add_argument(
        "--units",
        choices=("us", "metric"),
        default=None,
        help="unit system for display (default: $FIELDCHECK_UNITS, else the config file, else us)",
    )
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name, (module, help_) in COMMANDS.items():
        if only is not None and name != only:
            sub.add_parser(name, help=help_, add_help=False)
            continue
        mod = importlib.import_module(f"fieldcheck.commands.{module}")
        sp = sub.add_parser(name, help=help_, description=getattr(mod, "DESCRIPTION", help_))
        mod.add_arguments(sp)
        sp.set_defaults(_run=mod.run)
    return p


_NEGATIVE_WITH_UNIT = re.compile(r"^-\.?\d")  # "-10ft", "-3 kN"
_PLAIN_NEGATIVE = re.compile(r"^-\d+$|^-\d*\.\d+$")  # argparse already takes these as values


def _negative_values_attached(argv: list[str]) -> list[str]:
    """``--height -10ft`` as ``--height=-10ft``: argparse reads a value that starts with a minus
    and is not a plain number as an option, and says only 'expected one argument'; attached,
    the value reaches its field's own check, which names the field and the accepted range."""
    out: list[str] = []
    for a in argv:
        prev = out[-1] if out else ""
        if (
            _NEGATIVE_WITH_UNIT.match(a)
            and not _PLAIN_NEGATIVE.match(a)
            and prev.startswith("--")
            and "=" not in prev
            and len(prev) > 2
        ):
            out[-1] = f"{prev}={a}"
        else:
            out.append(a)
    return out


def main(argv: list[str] | None = None) -> int:
    argv = _negative_values_attached(sys.argv[1:] if argv is None else list(argv))
    command = next((a for a in argv if a in COMMANDS), None)
    parser = build_parser(only=command)
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # --help, --version, or a usage error already printed
        return int(exc.code or 0)
    try:
        if getattr(args, "units", None) is None:  # the user's default: environment, config file
            from fieldcheck.commands.about import default_units

            args.units = default_units()
        set_message_units(getattr(args, "units_here", None) or args.units)
        if args.command is None:
            return _open_interface(args)
        return int(args._run(args) or 0)
    except UsageError as exc:
        print(f"fieldcheck: {clean(exc)}", file=sys.stderr)
        return 2
    except ValueError as exc:  # bad input from the engine or the unit parser
        print(f"fieldcheck: {clean(exc)}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130
    except OSError as exc:
        if isinstance(exc, BrokenPipeError):
            return _broken_pipe()
        print(f"fieldcheck: {clean(store_error_sentence(exc, 'a file'))}", file=sys.stderr)
        return 2
    except Exception as exc:
        if not is_sqlite_error(exc):  # sqlite3 is imported only by commands that open a log
            raise
        # named for what it is: busy, full disk, read-only, damaged
        print(f"fieldcheck: {clean(store_error_sentence(exc, db_path(args)))}", file=sys.stderr)
        return 2


def _broken_pipe() -> int:
    """Output piped into `head` and friends: stop quietly."""
    import os

    os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    return 0


def _has_terminal() -> bool:
    try:
        return sys.stdin.isatty() and sys.stdout.isatty()
    except (AttributeError, ValueError):  # closed or replaced streams
        return False


def _open_interface(args: argparse.Namespace) -> int:
    if not _has_terminal():  # a pipe or CI: the interface would wait for keys that never come
        print(
            "fieldcheck: the interface needs a terminal; without one, run a command such as "
            "`fieldcheck rate --help` (all commands: `fieldcheck --help`).",
            file=sys.stderr,
        )
        return 2
    tui = importlib.import_module("fieldcheck.tui.app")
    return int(tui.run(db=args.db, units=args.units) or 0)
