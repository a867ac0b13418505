"""Collect ``bench_*.py`` files as test modules (pytest only collects ``test_*.py`` by default)."""

from __future__ import annotations

from pathlib import Path

import pytest


def pytest_collect_file(file_path: Path, parent: pytest.Collector) -> pytest.Module | None:
    if file_path.suffix == ".py" and file_path.name.startswith("bench_"):
        return pytest.Module.from_parent(parent, path=file_path)
    return None


def pytest_addoption(parser: pytest.Parser, pluginmanager: pytest.PytestPluginManager) -> None:
    # the documented commands pass ``-p no:doctest`` while pyproject's addopts carry ``--doctest-modules``
    # and ``--doctest-glob``; with the doctest plugin blocked those would be unknown, so accept and ignore them
    if not pluginmanager.has_plugin("doctest"):
        parser.addoption("--doctest-modules", action="store_true", help="ignored: the doctest plugin is disabled")
        parser.addoption("--doctest-glob", action="append", default=[], help="ignored: the doctest plugin is disabled")
