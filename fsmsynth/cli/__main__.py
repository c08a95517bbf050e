"""``python -m fsmsynth.cli``: the ``fsmsynth`` command."""

from fsmsynth.cli import run

run()
