"""Shared by the tests and the package's docstring examples (``--doctest-modules``)."""

from __future__ import annotations

from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent


@pytest.fixture(autouse=True)
def _examples_from_the_repository_root(request: pytest.FixtureRequest) -> None:
    """Docstring examples name the shipped files from the repository's root, as a reader there
    would: they run there, wherever pytest was started."""
    if isinstance(request.node, pytest.DoctestItem):
        request.getfixturevalue("monkeypatch").chdir(ROOT)
