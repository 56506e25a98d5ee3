"""Benchmark: memory and time of parsing pathological input (huge lines and strings).

Run: python tests/bench_syntax.py
Prints the peak memory traced by tracemalloc (Python allocations, the regex
engine's included) and the time for each case; asserts nothing (figures are
judged here, never in timed unit tests).

Target (issue "Never misread the data"): a 5 MB string literal parses with
memory linear and modest (it took 853 MB when the string pattern was a
repeated alternation); a 5 MB bad line gives a short message and excerpt.
"""

from __future__ import annotations

import sys
import time
import tracemalloc
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from dagward.syntax import parse_source  # noqa: E402

MB = 1_000_000
CASES = {
    "5 MB string literal (title)": 'title "' + "x" * (5 * MB) + '"\na -> b\n',
    "5 MB unclosed string literal": 'label a "' + "x" * (5 * MB) + "\na -> b\n",
    "5 MB name on a bad line": "a -> " + "x" * (5 * MB) + " y\n",
    "1 MB bad list line (330,000 names)": "a -> b\n" + "x, " * 330_000 + "-> 3y\n",
}


def main() -> None:
    parse_source("a -> b\n", "warm.dag")  # build the parser outside the measurement
    print(f"{'case':38} {'input':>8} {'peak':>9} {'ratio':>6} {'time':>7}  result")
    for label, text in CASES.items():
        tracemalloc.start()
        t0 = time.perf_counter()
        diagram, problem = parse_source(text, "big.dag")
        elapsed = time.perf_counter() - t0
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
        size = len(text.encode("utf-8"))
        result = "parsed" if problem is None else (
            f"error: message {len(problem.message)} chars, excerpt {len(problem.excerpt)} chars"
        )  # fmt: skip
        print(f"{label:38} {size / MB:6.1f}MB {peak / MB:7.1f}MB {peak / size:5.1f}x "
              f"{elapsed:6.2f}s  {result}")  # fmt: skip


if __name__ == "__main__":
    main()
