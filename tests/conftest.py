"""Shared fixtures: small, fast fleets and sites for the engine tests."""

from __future__ import annotations

import textwrap
from datetime import datetime, timezone
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "demo_sites"
START = datetime(2026, 6, 1, tzinfo=timezone.utc)


@pytest.fixture
def write_site(tmp_path):
    """Write a site.toml (dedented) into a temp folder and return its path."""

    def _write(text: str, name: str = "site.toml") -> Path:
        p = tmp_path / name
        p.write_text(textwrap.dedent(text), encoding="utf-8")
        return p

    return _write


MINIMAL_SITE = """\
[site]
name = "Test yard"
latitude = 45.0
longitude = -73.0
elevation_m = 100.0

[mount]
kind = "fixed"
height_m = 5.0

[terminal]
min_elevation_deg = 25.0
"""
