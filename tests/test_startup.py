"""The command line starts without the heavy libraries, and the package's names load on
first use.  Start-up times themselves are figures in benchmarks/startup.py, not tests.

Reference: PEP 562 (module ``__getattr__``), which the lazy names rely on.
"""

from __future__ import annotations

import subprocess
import sys

import fsmsynth

HEAVY = ("sympy", "scipy", "numpy", "pyeda")


def _loaded(code: str) -> set[str]:
    done = subprocess.run([sys.executable, "-c", code + "\nimport sys\n"
                           "print(' '.join(m.split('.')[0] for m in sys.modules))"],
                          capture_output=True, text=True, check=True)
    return set(done.stdout.split())


def test_the_command_line_and_the_package_load_no_heavy_library() -> None:
    for code in ("import fsmsynth", "import fsmsynth.cli",
                 "from fsmsynth.cli.arguments import parser; parser()"):
        assert not _loaded(code) & set(HEAVY), code
    assert {"sympy"} & _loaded("import fsmsynth\nfsmsynth.synthesize\n"
                               "fsmsynth.Equation.to_sympy(fsmsynth.Equation('y', ('a',), ()))")


def test_version_and_help_answer_without_the_library() -> None:
    done = subprocess.run([sys.executable, "-m", "fsmsynth", "--version"], capture_output=True,
                          text=True, check=True)
    assert done.stdout == f"fsmsynth {fsmsynth.__version__}\n"
    assert "build" in subprocess.run([sys.executable, "-m", "fsmsynth", "--help"],
                                     capture_output=True, text=True, check=True).stdout


def test_every_public_name_loads() -> None:
    for name in fsmsynth.__all__:
        assert getattr(fsmsynth, name) is not None, name
    assert set(fsmsynth.__all__) <= set(dir(fsmsynth))
    try:
        fsmsynth.no_such_name  # type: ignore[attr-defined]  # noqa: B018
    except AttributeError as exc:
        assert "no attribute 'no_such_name'" in str(exc)
    else:
        raise AssertionError("an unknown name must be an AttributeError")
