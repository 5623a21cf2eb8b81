"""The ``siderod`` command: argument parsing, dispatch, exit codes and top-level error printing.

Each verb lives in its own module with ``register(subparsers)`` and ``run(args) -> int``.
Verb modules import their heavy dependencies inside ``run``, so a quick verb stays quick.
"""

from __future__ import annotations

import argparse
import importlib
import logging
import os
import sys
from collections.abc import Sequence

# numpy's OpenBLAS keeps a thread pool whose threads spin after each matrix product. siderod's
# products are thin (3 x 3 rotations, n x 3 by 3 x T), so the pool only burns CPU, most on a busy
# machine (measured on 2 shared cores: 0.07 s of a cold `siderod now`, 0.23 s of a whole-catalogue
# `siderod shortlist`). One thread unless the user chose otherwise; this must run before numpy loads,
# and nothing above imports it.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

from siderod import __version__
from siderod.common.errors import ConfigErrors, ServiceNotRunning, SiderodError

__all__ = [
    "main",
    "build_parser",
    "EXIT_OK",
    "EXIT_BAD_INPUT",
    "EXIT_USAGE",
    "EXIT_NO_SERVICE",
    "EXIT_FAILURE",
]

EXIT_OK = 0
EXIT_BAD_INPUT = 1  # a configuration or input problem the user can fix
EXIT_USAGE = 2  # argparse's own code for a malformed command line
EXIT_NO_SERVICE = 3  # a control verb found no running service
EXIT_FAILURE = 4  # anything else went wrong at run time

# In the order `siderod --help` lists them: the everyday verbs first.
_VERB_MODULES = (
    "siderod.cli.now",
    "siderod.cli.agenda",
    "siderod.cli.sidereal",
    "siderod.cli.watch",
    "siderod.cli.run",
    "siderod.cli.control",
    "siderod.cli.seek",
    "siderod.cli.shortlist",
    "siderod.cli.enlist",
    "siderod.cli.check",
    "siderod.cli.init",
    "siderod.cli.unit",
)


def main(argv: Sequence[str] | None = None) -> int:
    """Run one ``siderod`` command line and return its exit code."""
    parser = build_parser()
    args = parser.parse_args(_join_dashed_values(sys.argv[1:] if argv is None else list(argv)))
    if not hasattr(args, "func"):
        parser.print_help(sys.stderr)
        return EXIT_USAGE
    _configure_logging(getattr(args, "log_level", "warning"))
    try:
        return int(args.func(args) or 0)
    except ConfigErrors as exc:
        print(f"siderod: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except ServiceNotRunning as exc:
        print(f"siderod: {exc}", file=sys.stderr)
        return EXIT_NO_SERVICE
    except SiderodError as exc:
        print(f"siderod: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except ValueError as exc:
        # The astronomy core reports bad angles, naive datetimes and the like as ValueError
        # subclasses whose message already names the bad text and the accepted forms.
        if type(exc).__module__.startswith("siderod."):
            print(f"siderod: {exc}", file=sys.stderr)
            return EXIT_BAD_INPUT
        raise
    except BrokenPipeError:
        # Output piped into `head` and the like: stop quietly, as other command-line tools do.
        _silence_stdout()
        return EXIT_OK
    except KeyboardInterrupt:
        return 130


def _join_dashed_values(argv: list[str]) -> list[str]:
    # argparse reads "--for -5m" as a missing value followed by an unknown option and says only
    # "expected one argument"; joined as "--for=-5m" the value reaches its own check, which says
    # what is wrong with it.
    out: list[str] = []
    for word in argv:
        if out and out[-1] in _VALUE_OPTIONS and word.startswith("-") and not word.startswith("--"):
            out[-1] = f"{out[-1]}={word}"
        else:
            out.append(word)
    return out


_VALUE_OPTIONS = frozenset({"--for", "--hours", "--hz"})


def build_parser() -> argparse.ArgumentParser:
    """The whole argument tree: common options on every verb, then each verb's own."""
    parser = argparse.ArgumentParser(
        prog="siderod",
        description="Sidereal clock and alert daemon: LST, culminations, altitude crossings, meridian flips.",
    )
    parser.add_argument("--version", action="version", version=f"siderod {__version__}")
    # --config and --log-level go before the verb or after it (or after a verb's action, as in
    # `service install --config FILE`); the one written last wins.
    _add_common_options(parser, top_level=True)
    subparsers = parser.add_subparsers(title="commands", metavar="COMMAND")
    for name in _VERB_MODULES:
        importlib.import_module(name).register(subparsers)
    for verb_parser in subparsers.choices.values():
        _add_common_options(verb_parser)
    return parser


LOG_LEVELS = ("debug", "info", "warning", "error")


def _add_common_options(parser: argparse.ArgumentParser, *, top_level: bool = False) -> None:
    # Every verb takes these; a verb that already defines one keeps its own. Below the top level
    # they default to SUPPRESS, so an option given before the verb is not reset by the verb's
    # parser (argparse copies every sub-parser default over the caller's namespace).
    known = parser._option_string_actions  # argparse offers no public lookup
    if "--config" not in known:
        parser.add_argument(
            "--config",
            metavar="FILE",
            default=None if top_level else argparse.SUPPRESS,
            help="configuration file (default: $SIDEROD_CONFIG, the user config directory, then the demo)",
        )
    if "--log-level" not in known:
        parser.add_argument(
            "--log-level",
            default="warning" if top_level else argparse.SUPPRESS,
            type=str.lower,  # DEBUG and debug alike
            choices=LOG_LEVELS,
            help="how much to log on stderr: debug, info, warning or error, in any case "
            "(default: warning; `run` logs at info)",
        )
    for action in parser._actions:  # nested actions, as in `service install`
        if isinstance(action, argparse._SubParsersAction):
            for sub in action.choices.values():
                _add_common_options(sub)


def _silence_stdout() -> None:
    import os

    devnull = os.open(os.devnull, os.O_WRONLY)
    os.dup2(devnull, sys.stdout.fileno())


def _configure_logging(level_name: str) -> None:
    from siderod.common.logformat import LOG_FORMAT

    # One line per event on stderr; journald keeps them under systemd. The live view replaces
    # this handler with one that prints above the board (see siderod.view.live).
    logging.basicConfig(
        level=getattr(logging, level_name.upper()),
        format=LOG_FORMAT,
        stream=sys.stderr,
    )
