"""Progress bars (tqdm) for long computations: shown on a terminal, off otherwise or when asked.

``enabled``: True shows the bar, False hides it, None shows it only when standard error is a terminal. A missing
tqdm never stops a computation (progress is a convenience, not a requirement).
"""

from __future__ import annotations

import sys

__all__ = ["progress_bar"]


class _Silent:
    """Stands in for a bar that is not shown."""

    def update(self, n: int = 1) -> None:
        pass

    def close(self) -> None:
        pass


def wanted(enabled: bool | None) -> bool:
    return sys.stderr.isatty() if enabled is None else bool(enabled)


def progress_bar(total: int, desc: str, unit: str, enabled: bool | None = None, *, leave: bool = False):
    """A tqdm bar of ``total`` steps, or an object with the same ``update``/``close`` that shows nothing."""
    if not wanted(enabled):
        return _Silent()
    try:
        from tqdm import tqdm
    except ImportError:  # pragma: no cover - tqdm is a core dependency
        return _Silent()
    return tqdm(total=total, desc=desc, unit=unit, leave=leave)
