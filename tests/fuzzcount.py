"""Counts of fuzz examples tried, reported by the terminal-summary hook in conftest.py."""

from __future__ import annotations

from collections import Counter

#: test name -> number of examples tried in this session
EXAMPLES: Counter[str] = Counter()
#: test name -> how many of them were accepted (the rest refused with InputError)
ACCEPTED: Counter[str] = Counter()


def tried(name: str, accepted: bool) -> None:
    """Count one example of the fuzz test *name* and its outcome."""
    EXAMPLES[name] += 1
    ACCEPTED[name] += bool(accepted)
