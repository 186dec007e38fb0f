"""Which engine a benchmark measured: the short commit of a source tree, recorded in the
JSON files instead of the tree's path (which names a folder of one machine)."""

from __future__ import annotations

import subprocess
from pathlib import Path


def short_commit(tree: Path) -> str:
    """The short commit of the git checkout at ``tree``; "unknown" outside one."""
    try:
        return subprocess.run(["git", "-C", str(tree), "rev-parse", "--short", "HEAD"],
                              capture_output=True, text=True, check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return "unknown"
