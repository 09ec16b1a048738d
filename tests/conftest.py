"""Shared fixtures: small, fast fleets and sites for the engine tests."""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest


@pytest.fixture
def write_site(tmp_path):
    """Write a site.toml (dedented) into a temp folder and return its path."""

    def _write(text: str, name: str = "site.toml") -> Path:
        p = tmp_path / name
        p.write_text(textwrap.dedent(text), encoding="utf-8")
        return p

    return _write
