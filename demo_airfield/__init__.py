"""The invented demo airfield: Harrowfield, on open prairie (fictional).

Nothing here describes a real airport; names, positions and elevations are
made up for demonstrating mastplan.
"""

from pathlib import Path

#: The demo site file.
SITE_FILE = Path(__file__).with_name("site.toml")
