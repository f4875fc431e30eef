"""One line format for benchmark results, read by run_all.py."""

from __future__ import annotations


def ratio_line(name: str, ours: str, reference: str, ratio: float, target: str, met: bool) -> None:
    """Print one result as ``RESULT|name|ours|reference|ratio|target|met``."""
    print(f"RESULT|{name}|{ours}|{reference}|{ratio:.3g}|{target}|{'yes' if met else 'NO'}")
