"""Sphinx configuration of the fsmsynth documentation (build: sphinx-build -W docs docs/_build)."""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from fsmsynth.version import __version__

project = "fsmsynth"
author = "the fsmsynth developers"
release = version = __version__
extensions = ["myst_parser", "sphinx.ext.autodoc", "sphinx.ext.napoleon"]
source_suffix = {".md": "markdown"}
exclude_patterns = ["_build", "figures"]  # included by the pages that show them
myst_heading_anchors = 3
napoleon_google_docstring = False
napoleon_numpy_docstring = True
napoleon_use_ivar = True  # Attributes sections as fields: dataclass fields are not documented twice
autodoc_member_order = "bysource"
autodoc_typehints = "none"  # the signatures show the types; the Parameters sections explain
html_theme = "alabaster"
