"""The ``fsmsynth`` command: argument parsing and printing only; the work is the library's.

One module per group of commands: :mod:`~fsmsynth.cli.design` (build, timing, compare,
convert), :mod:`~fsmsynth.cli.table` (reduce, diagram, kmap, check) and
:mod:`~fsmsynth.cli.many` (build-all, sweep); :mod:`~fsmsynth.cli.arguments` holds the parser.
"""

from __future__ import annotations

import os
import signal
import sys
from collections.abc import Sequence

from fsmsynth.base.errors import FsmSynthError, VerificationError
from fsmsynth.cli.arguments import parser
from fsmsynth.cli.design import build_command, compare_command, convert_command, timing_command
from fsmsynth.cli.many import build_all_command, sweep_command
from fsmsynth.cli.table import (
    check_command,
    diagram_command,
    kmap_command,
    reduce_command,
    rewrite_command,
)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; returns the exit status (0 ok, 2 bad input, 1 failure)."""
    args, extra = parser().parse_known_args(argv)
    if extra:  # reported by the subcommand, with its usage (not the top level's)
        args.command_parser.error(f"unrecognized arguments: {' '.join(extra)}")
    try:
        commands = {"build": build_command, "reduce": reduce_command,
                    "compare": compare_command, "timing": timing_command,
                    "diagram": diagram_command, "kmap": kmap_command,
                    "convert": convert_command, "check": check_command,
                    "build-all": build_all_command, "sweep": sweep_command,
                    "rewrite": rewrite_command}
        return commands[args.command](args)
    except FsmSynthError as exc:
        print(f"fsmsynth: error: {exc}", file=sys.stderr)
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
