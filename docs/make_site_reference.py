"""Remake docs/site-file.md, the reference of every site-file key, from the parser's own list.

Run: python docs/make_site_reference.py
"""

from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from geo.site.keys import reference_markdown  # noqa: E402


def main() -> Path:
    """Write the reference beside this script and return its path."""
    path = HERE / "site-file.md"
    path.write_text(reference_markdown(), encoding="utf-8")
    return path


if __name__ == "__main__":
    print(main())
