"""The notebooks run from top to bottom without error (and are stored without outputs)."""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest

NOTEBOOKS = sorted((Path(__file__).resolve().parent.parent / "notebooks").glob("*.ipynb"))


def test_there_are_at_least_two_notebooks() -> None:
    assert len(NOTEBOOKS) >= 2


@pytest.mark.parametrize("path", NOTEBOOKS, ids=lambda p: p.name)
def test_notebook_is_stored_without_outputs(path: Path) -> None:
    cells = json.loads(path.read_text())["cells"]
    assert all(c.get("outputs", []) == [] and c.get("execution_count") is None
               for c in cells if c["cell_type"] == "code")


@pytest.mark.parametrize("path", NOTEBOOKS, ids=lambda p: p.name)
def test_notebook_executes(path: Path) -> None:
    try:
        import nbformat
        from nbclient import NotebookClient
    except ImportError:
        if os.environ.get("CI"):
            raise
        pytest.skip("nbclient is not installed")
    notebook = nbformat.read(path, as_version=4)
    NotebookClient(notebook, timeout=300, kernel_name="python3",
                   resources={"metadata": {"path": str(path.parent)}}).execute()
    errors = [o for c in notebook.cells for o in c.get("outputs", [])
              if o.get("output_type") == "error"]
    assert errors == []
