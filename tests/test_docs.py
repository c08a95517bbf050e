"""The documentation runs: every Python block of the README and of docs/ executes (the blocks
of one page in order, sharing names, in a fresh folder), every ``>>>`` example gives the
output shown, and every name the pages import from fsmsynth exists."""

from __future__ import annotations

import doctest
import importlib
import importlib.util
import re
import shutil
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
PAGES = [ROOT / "README.md", *sorted((ROOT / "docs").rglob("*.md"))]
FENCE = re.compile(r"^```(\w*)\n(.*?)^```", re.S | re.M)


def _blocks(page: Path, language: str) -> list[str]:
    return [body for lang, body in FENCE.findall(page.read_text()) if lang == language]


@pytest.mark.parametrize("page", PAGES, ids=lambda p: str(p.relative_to(ROOT)))
def test_python_blocks_run(page: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # From a copy of the repository's examples, as a reader at the repository root would.
    shutil.copytree(ROOT / "examples", tmp_path / "examples",
                    ignore=shutil.ignore_patterns("build"))
    monkeypatch.chdir(tmp_path)
    namespace: dict[str, object] = {"__name__": "__docs__"}
    for number, body in enumerate(_blocks(page, "python"), start=1):
        if body.lstrip().startswith(">>>"):
            continue  # an interactive example: checked by the doctest below
        exec(compile(body, f"{page.name} python block {number}", "exec"), namespace)


@pytest.mark.parametrize("page", PAGES, ids=lambda p: str(p.relative_to(ROOT)))
def test_interactive_examples_give_what_they_show(page: Path) -> None:
    text = "\n".join(b for b in _blocks(page, "python") + _blocks(page, "pycon")
                     if b.lstrip().startswith(">>>"))
    test = doctest.DocTestParser().get_doctest(text, {}, page.name, str(page), 0)
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    runner.run(test)
    assert runner.failures == 0


def test_the_pages_have_interactive_examples() -> None:
    assert sum(b.count(">>>") for page in PAGES for b in _blocks(page, "pycon")) >= 3


IMPORT = re.compile(r"^\s*from (fsmsynth[\w.]*) import (?:\(([\w, \n]+)\)|([\w, ]+))", re.M)


def test_every_name_the_pages_import_exists() -> None:
    shown = []
    for page in [*PAGES, ROOT / "DEVELOPERS.md"]:
        for module, grouped, names in IMPORT.findall(page.read_text()):
            for name in (n.strip() for n in (grouped or names).replace("\n", ",").split(",")):
                if name:
                    shown.append((page.name, module, name))
    assert len(shown) >= 5  # the pages do show imports
    missing = [f"{page}: from {module} import {name}" for page, module, name in shown
               if not hasattr(importlib.import_module(module), name)]
    assert missing == []


def test_public_names_are_functions_and_types_not_modules() -> None:
    """``from fsmsynth import sweep`` gives the function (a module would shadow it)."""
    import types

    import fsmsynth
    import fsmsynth.writers

    modules = [name for package in (fsmsynth, fsmsynth.writers) for name in package.__all__
               if isinstance(getattr(package, name), types.ModuleType)]
    assert modules == []
    from fsmsynth import Sweep, build_project, sweep

    assert callable(sweep) and callable(build_project) and isinstance(Sweep, type)


def test_readme_is_a_front_door() -> None:
    """The README opens with the job, then the two commands, and stays short: the rest is
    in docs/."""
    text = (ROOT / "README.md").read_text()
    assert len(text.splitlines()) <= 250
    first_fences = FENCE.findall(text)[:2]
    assert [lang for lang, _ in first_fences] == ["sh", "sh"]
    assert "pip install" in first_fences[0][1] and "fsmsynth build" in first_fences[0][1]
    assert "pytest" in first_fences[1][1]
    for link in re.findall(r"\]\(((?:docs/|DEVELOPERS)[^)#]*)", text):
        assert (ROOT / link).exists(), link


def test_the_figures_the_docs_show_are_what_fsmsynth_computes_now() -> None:
    """docs/figures.py computes every table of numbers the guide includes; the committed
    files must be what it gives today (run it and commit when a change moves a figure)."""
    spec = importlib.util.spec_from_file_location("docs_figures", ROOT / "docs" / "figures.py")
    assert spec is not None and spec.loader is not None
    figures = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(figures)
    assert set(figures.FIGURES) == {p.stem for p in (ROOT / "docs" / "figures").glob("*.md")}
    for name, make in figures.FIGURES.items():
        assert (ROOT / "docs" / "figures" / f"{name}.md").read_text() == make(), name
        assert any(f"figures/{name}.md" in page.read_text() for page in PAGES), name
