"""Pausing Python's cyclic garbage collector around bulk construction.

The model and the causal graph are millions of small tuples and dicts that form no
reference cycles. While they are being built, every automatic collection rescans
everything built so far, which made a 100,000-variable diagram several times
slower to parse and to turn into a graph. Reference counting still frees memory
as usual; only the cycle detector waits.
"""

from __future__ import annotations

import gc
from collections.abc import Iterator
from contextlib import contextmanager


@contextmanager
def collector_paused() -> Iterator[None]:
    was_enabled = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_enabled:
            gc.enable()
