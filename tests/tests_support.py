"""Paths shared by tests."""

from pathlib import Path

DEMO_SITE = Path(__file__).resolve().parents[1] / "demo_airfield" / "site.toml"
