"""Shared test setup: spglib raises on failure; the source tree is importable without installation."""

from __future__ import annotations

import os
import sys
from pathlib import Path

# spglib 2.x warns and returns None by default; the library's adapter handles both, the tests want exceptions.
os.environ.setdefault("SPGLIB_OLD_ERROR_HANDLING", "0")

_ROOT = Path(__file__).resolve().parents[1]
for _path in (_ROOT, _ROOT / "plugins"):
    if str(_path) not in sys.path:
        sys.path.insert(0, str(_path))
