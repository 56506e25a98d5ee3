"""How many examples a property test draws.

The README's test command is the quick loop a developer runs after each change
(under two minutes on 2 cores): there each property test draws a quarter of
its examples. CI (`.ci/run`) then runs every property test again with all of
them (`DAGWARD_TESTS=thorough python -m pytest -m hypothesis`), so no example
count is lowered where a change lands.
"""

from __future__ import annotations

import os

THOROUGH = os.environ.get("DAGWARD_TESTS") == "thorough"


def examples(n: int) -> int:
    """``n`` examples in the thorough run, a quarter of them (at least 25) otherwise."""
    return n if THOROUGH else max(25, n // 4)
