"""Benchmark: parsing speed, `dagward check` start-up, and a large check.

Run: python tests/bench_check.py [--quick]
Prints a table of figures and ratios against the targets; asserts nothing (the
machine is noisy: speed goals are judged here, never in timed unit tests).

Targets (issue "Foundation" and "Causal engine"):
- parse a 100,000-line file at >= 50,000 lines/s;
- `dagward check` of a 30-line sample within 1.5x of `python -c "import networkx, lark"`;
- `dagward check` of a 100,000-variable diagram with ~200,000 arrows and three
  analyses in < 10 s;
- at most 1 KB per variable of peak memory above start-up for `check` and
  `fmt --check` of that diagram (issue "Memory").
"""

from __future__ import annotations

import os
import random
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from dagward.config import Settings  # noqa: E402
from dagward.engine import lint_source  # noqa: E402
from dagward.syntax import parse_source  # noqa: E402


def hundred_thousand_lines(seed: int = 1) -> str:
    rng = random.Random(seed)
    lines = ['title "A large generated diagram"', "unmeasured u0, u1, u2"]
    n = 100_000
    for i in range(n - 10):
        j = rng.randrange(i + 1, i + 50)
        if i % 10 == 0:
            lines.append(f"v{i} -> v{j}  # reason for arrow {i}")
        elif i % 10 == 1:
            lines.append(f"v{i}, v{i + 1} -> v{j}")
        else:
            lines.append(f"v{i} -> v{j}")
    lines += ["analysis main {", "  exposure: v10", "  outcome: v99000", "  adjust: none", "}"]
    while len(lines) < n:
        lines.append("# padding comment")
    return "\n".join(lines) + "\n"


def best_of(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def command_time(args: list[str], repeat: int, cwd: Path) -> float:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        subprocess.run(args, cwd=cwd, env=env, capture_output=True, check=False)
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def large_diagram(n_vars: int, n_arrows: int, seed: int = 3) -> str:
    """A random DAG (index order is a topological order) with three analyses:
    one whose declared set is the smallest valid set, one that adds an
    instrument-like parent of the exposure to a valid set, and one whose declared
    set (three arbitrary earlier variables) leaves paths open."""
    import networkx as nx
    from dagward.causal import smallest_adjustment_set

    rng = random.Random(seed)
    seen: set[tuple[int, int]] = set()
    while len(seen) < n_arrows:
        a = rng.randrange(n_vars - 1)
        b = min(n_vars - 1, a + 1 + int(rng.expovariate(1 / 200)))
        seen.add((a, b))
    # no variable without arrows: each one the random arrows missed gets one
    touched = {x for e in seen for x in e}
    seen.update(
        (min(i, n_vars - 2), min(i, n_vars - 2) + 1) for i in range(n_vars) if i not in touched
    )
    # Every variable in one of ten periods, in index order: arrows only go to a
    # higher index, so they all run forward in time and the periods raise no
    # finding.
    lines = []
    for k in range(10):
        block = range(n_vars * k // 10, n_vars * (k + 1) // 10)
        lines.append(f"period p{k}: " + ", ".join(f"v{i}" for i in block))
    lines += [f"v{a} -> v{b}" for a, b in sorted(seen)]
    g = nx.DiGraph((f"v{a}", f"v{b}") for a, b in seen)
    g.add_nodes_from(f"v{i}" for i in range(n_vars))
    measured = set(g)
    roles = [
        (n_vars * a // 100_000, n_vars * b // 100_000)
        for a, b in ((1000, 60_000), (20_000, 90_000), (50_000, 99_000))
    ]
    for k, (x, y) in enumerate(roles):
        if k < 2:
            valid = sorted(smallest_adjustment_set(g, {f"v{x}"}, {f"v{y}"}, measured) or ())
            if k == 1:  # a new root variable that only causes the exposure
                lines.append(f"instrument{k} -> v{x}")
                valid.append(f"instrument{k}")
            adjust = ", ".join(valid) or "none"
        else:
            adjust = ", ".join(f"v{x - d}" for d in (1, 2, 3))
        lines += [f"analysis a{k} {{", f"  exposure: v{x}", f"  outcome: v{y}",
                  f"  adjust: {adjust}", "}"]  # fmt: skip
    return "\n".join(lines) + "\n"


# Runs a command and prints its peak resident memory (KB) on stderr's last line.
# The benchmark holds large diagrams in memory; a child forked straight from it
# would count those pages as its own, so a small process starts each command.
_WRAP = (
    "import resource, subprocess, sys\n"
    "code = subprocess.run(sys.argv[1:], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL).returncode\n"
    "print(code, resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss, file=sys.stderr)\n"
)


def run_measured(
    args: list[str], cwd: Path, timeout: float
) -> tuple[float | None, float, int | None]:
    """Run a command; return (seconds or None when over ``timeout``, peak resident
    memory in MB of the command's process, exit status)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    t = time.perf_counter()
    try:
        run = subprocess.run([sys.executable, "-c", _WRAP, *args], cwd=cwd, env=env,
                             capture_output=True, text=True, timeout=timeout)  # fmt: skip
    except subprocess.TimeoutExpired:
        return None, float("nan"), None
    seconds = time.perf_counter() - t
    code, peak_kb = run.stderr.split()[-2:]
    return seconds, int(peak_kb) / 1024, int(code)


# The commands of the scaling table: (label, arguments after the file).
SCALING_COMMANDS = [
    ("check", ["check"]),
    ("fmt --check", ["fmt", "--check"]),
    ("adjustment", ["adjustment"]),
    ("paths --limit 100", ["paths", "--limit", "100"]),
    ("independencies --max 100", ["independencies", "--max", "100"]),
]
SIZES = (1_000, 10_000, 100_000)


def scaling_table(commands=SCALING_COMMANDS, sizes=SIZES, timeout: float = 60.0) -> None:
    """Time and peak memory of each command on generated diagrams of each size
    (``large_diagram``: two arrows per variable, three analyses), with the growth
    exponent between sizes (time ratio as a power of the size ratio: 1 is linear).
    A command over ``timeout`` is stopped and shown as such."""
    import math

    results: dict[tuple[str, int], tuple[float | None, float]] = {}
    with tempfile.TemporaryDirectory() as tmp:
        tmpdir = Path(tmp)
        _, base, _ = run_measured([sys.executable, "-m", "dagward", "check", "--help"], tmpdir, 60)
        for n in sizes:
            path = tmpdir / f"gen{n}.dag"
            path.write_text(large_diagram(n, 2 * n))
            for label, extra in commands:
                seconds, peak, _ = run_measured([sys.executable, "-m", "dagward", *extra[:1], str(path), *extra[1:]],
                                                tmpdir, timeout)  # fmt: skip
                results[label, n] = (seconds, peak)
    print(
        f"{'command':26}"
        + "".join(f"{f'{n:,} vars':>30}" for n in sizes)
        + "   growth exponent time/memory"
    )
    for label, _ in commands:
        cells, growth = [], []
        for n in sizes:
            seconds, peak = results[label, n]
            shown = f"> {timeout:.0f} s" if seconds is None else f"{seconds:.2f} s"
            if seconds is None:
                cells.append(shown.rjust(30))
                continue
            cells.append(
                f"{shown} {peak:5.0f} MB {max(peak - base, 0) * 1024 / n:5.1f} KB/v".rjust(30)
            )
        for a, b in zip(sizes, sizes[1:], strict=False):
            (ta, ma), (tb, mb) = results[label, a], results[label, b]
            k = math.log(b / a)
            if ta is None or tb is None:
                growth.append("-")
                continue
            growth.append(f"{math.log(tb / ta) / k:.2f}/{math.log(mb / ma) / k:.2f}")
        print(f"{label:26}" + "".join(cells) + "   " + ", ".join(growth))
    if any(label == "check" for label, _ in commands):
        print("time as a multiple of `check` of the same file (target for adjustment: <= 2x):")
        for label, _ in commands:
            if label == "check":
                continue
            ratios = []
            for n in sizes:
                t, t_check = results[label, n][0], results["check", n][0]
                ratios.append("-" if t is None or t_check is None else f"{t / t_check:.2f}x")
            print(f"  {label:24}" + "".join(f"{r:>12}" for r in ratios))
    print(
        f"(MB: peak resident size of the process; KB/v: above the {base:.0f} MB of start-up, per variable;"
    )
    print(
        " growth exponent: log(ratio of times) / log(ratio of sizes) between neighbouring sizes, 1 = linear)"
    )


def main() -> None:
    quick = "--quick" in sys.argv
    rows = []
    text = hundred_thousand_lines()
    n_lines = text.count("\n")
    t_parse = best_of(lambda: parse_source(text, "big.dag"), 1 if quick else 3)
    rows.append(("parse 100,000-line file", f"{t_parse:.2f} s", f"{n_lines / t_parse:,.0f} lines/s",
                 ">= 50,000 lines/s", f"{n_lines / t_parse / 50_000:.2f}x target"))  # fmt: skip
    t_check = best_of(lambda: lint_source(text, "big.dag", Settings()), 1)
    rows.append(("check the same file (all rules)", f"{t_check:.2f} s",
                 f"{n_lines / t_check:,.0f} lines/s", "", ""))  # fmt: skip

    repeat = 3 if quick else 9
    with tempfile.TemporaryDirectory() as tmp:
        tmpdir = Path(tmp)
        sample = ROOT / "samples" / "wellness.dag"
        base = command_time([sys.executable, "-c", "import networkx, lark"], repeat, tmpdir)
        ours = command_time([sys.executable, "-m", "dagward", "check", str(sample)], repeat, tmpdir)
        rows.append(('python -c "import networkx, lark"', f"{base * 1000:.0f} ms", "", "", ""))
        rows.append((f"dagward check {sample.name} ({sample.read_text().count(chr(10))} lines)",
                     f"{ours * 1000:.0f} ms", f"{ours / base:.2f}x the imports", "<= 1.5x",
                     "met" if ours / base <= 1.5 else "MISSED"))  # fmt: skip

        big = large_diagram(100_000, 200_000)
        path = tmpdir / "huge.dag"
        path.write_text(big)
        t = time.perf_counter()
        run = subprocess.run([sys.executable, "-m", "dagward", "check", str(path)], cwd=tmpdir,
                             env={**os.environ, "PYTHONPATH": str(ROOT)}, capture_output=True,
                             text=True)  # fmt: skip
        t_big = time.perf_counter() - t
        kept = [x for x in run.stdout.splitlines() if x and not x.startswith("what a rule")]
        summary = kept[-1] if kept else run.stderr[-200:]
        rows.append(("dagward check: 100,000 variables, 200,000 arrows, 3 analyses (2 valid, 1 not)",
                     f"{t_big:.2f} s", summary, "< 10 s", "met" if t_big < 10 else "MISSED"))  # fmt: skip
        # KB per variable above the start-up (the peak of `dagward check --help`)
        t_, peak_, _ = run_measured([sys.executable, "-m", "dagward", "check", "--help"], ROOT, 60)
        for label, extra in (("check", []), ("fmt --check", ["--check"])):
            t_run, peak, _ = run_measured(
                [sys.executable, "-m", "dagward", label.split()[0], str(path), *extra], tmpdir, 120
            )
            per = max(peak - peak_, 0) * 1024 / 100_000
            rows.append((f"  peak memory of `dagward {label}` on that file", f"{t_run:.2f} s",
                         f"{peak:.0f} MB, {per:.2f} KB per variable above start-up",
                         "<= 1 KB/variable", "met" if per <= 1 else "MISSED"))  # fmt: skip

    rows.append(
        ("peak memory of `dagward check --help` (Python, imports)", f"{peak_:.0f} MB", "", "", "")
    )
    widths = [max(len(str(r[i])) for r in rows) for i in range(5)]
    header = ("measure", "time", "figure", "target", "ratio / verdict")
    widths = [max(w, len(h)) for w, h in zip(widths, header, strict=False)]
    print("  ".join(h.ljust(w) for h, w in zip(header, widths, strict=False)))
    print("  ".join("-" * w for w in widths))
    for r in rows:
        print("  ".join(str(c).ljust(w) for c, w in zip(r, widths, strict=False)))
    print()
    scaling_table(SCALING_COMMANDS[:2] if quick else SCALING_COMMANDS)


if __name__ == "__main__":
    main()
