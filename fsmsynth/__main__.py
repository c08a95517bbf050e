"""``python -m fsmsynth``: the ``fsmsynth`` command."""

from fsmsynth.cli import run

run()
