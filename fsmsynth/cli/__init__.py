"""The ``fsmsynth`` command: argument parsing and printing only; the work is the library's.

One module per group of commands: :mod:`~fsmsynth.cli.design` (build, timing, compare,
convert), :mod:`~fsmsynth.cli.table` (reduce, diagram, kmap, check) and
:mod:`~fsmsynth.cli.many` (build-all, sweep); :mod:`~fsmsynth.cli.arguments` holds the parser.
"""

from __future__ import annotations

import importlib
import os
import signal
import sys
from collections.abc import Sequence

from fsmsynth.base.errors import FsmSynthError, VerificationError
from fsmsynth.cli.arguments import parser

COMMANDS = {
    "build": "design", "timing": "design", "compare": "design", "convert": "design",
    "reduce": "table", "diagram": "table", "kmap": "table", "check": "table",
    "rewrite": "table", "build-all": "many", "sweep": "many",
}
"""Each command and the module of :mod:`fsmsynth.cli` that runs it, imported only when the
command runs: ``--version`` and ``--help`` need none of the library."""


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit status (0 ok, 2 bad input, 1 failure)."""
    args, extra = parser().parse_known_args(argv)
    if extra:  # reported by the subcommand, with its usage (not the top level's)
        args.command_parser.error(f"unrecognized arguments: {' '.join(extra)}")
    try:
        module = importlib.import_module(f"fsmsynth.cli.{COMMANDS[args.command]}")
        command = getattr(module, f"{args.command.replace('-', '_')}_command")
        return int(command(args))
    except FsmSynthError as exc:
        print(f"fsmsynth: error: {exc}", file=sys.stderr)
        trace = getattr(exc, "trace", None)
        if trace is not None:  # the failing run, cycle by cycle
            print("".join(f"  {line}\n" for line in trace.table_text(note=False).splitlines()),
                  end="", file=sys.stderr)
        return 1 if isinstance(exc, VerificationError) else 2
    except KeyboardInterrupt:
        print("fsmsynth: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # The reader (``| head``) went away: stop quietly, as command-line tools do.
        sys.stdout = open(os.devnull, "w")  # noqa: SIM115
        return 0


def _terminate(signum: int, _frame: object) -> None:
    """SIGTERM: unwind like Ctrl-C, so that no half-written output or temporary stays."""
    raise SystemExit(128 + signum)


def run() -> None:
    """Entry point of the ``fsmsynth`` command."""
    signal.signal(signal.SIGTERM, _terminate)
    sys.exit(main())
