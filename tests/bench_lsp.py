"""Benchmark: what an editor waits for from `dagward language-server`.

Run: python tests/bench_lsp.py [--quick]
Prints figures; asserts nothing (speed goals are judged here, never in timed
unit tests). Measured in-process on the functions the server calls: linting a
buffer (`compute`, run in a worker thread after edits), the hover text of a
variable, the rename spans and the completion words.

Goal (common practice for editors): hover, rename and completion well under
0.1 s on study-sized diagrams (tens to hundreds of variables); linting after an
edit may take longer on very large diagrams, since it runs off the main loop.
"""

from __future__ import annotations

import random
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from dagward.lsp import Options, completion_words, compute, hover_markdown, rename_spans  # noqa: E402


def diagram(n: int, seed: int = 7) -> str:
    """A layered random diagram: each variable causes a few later ones."""
    rng = random.Random(seed)
    lines = ['title "generated"']
    for i in range(n - 1):
        for j in {rng.randrange(i + 1, min(n, i + 30)) for _ in range(2)}:
            lines.append(f"v{i} -> v{j}  # generated")
    lines += ["analysis a {", "  exposure: v10", f"  outcome: v{n - 1}", "  adjust: v3, v5", "}"]
    return "\n".join(lines) + "\n"


def best_of(repeat: int, fn) -> float:
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        times.append(time.perf_counter() - start)
    return min(times)


def main() -> None:
    quick = "--quick" in sys.argv
    sizes = (40, 400, 4_000) if quick else (40, 400, 4_000, 40_000)
    print(f"{'variables':>10} {'lint s':>9} {'hover s':>9} {'rename s':>9} {'complete s':>10}")
    for n in sizes:
        text = diagram(n)
        uri = f"file:///tmp/bench-{n}.dag"
        repeat = 3 if n <= 4_000 else 1
        lint = best_of(repeat, lambda text=text, uri=uri: compute(uri, text, Options()))
        result, _ = compute(uri, text, Options())
        hover = best_of(repeat, lambda result=result: hover_markdown(result, "v20"))
        rename = best_of(repeat, lambda result=result: rename_spans(result.diagram, "v20", "w20"))
        known = list(result.diagram.variables)
        lines = text.count("\n")
        complete = best_of(
            repeat,
            lambda text=text, known=known, lines=lines: completion_words(text, lines, 1, known),
        )
        print(f"{n:>10} {lint:>9.3f} {hover:>9.3f} {rename:>9.3f} {complete:>10.3f}")


if __name__ == "__main__":
    main()
