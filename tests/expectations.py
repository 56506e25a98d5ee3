"""Reading `# expect:` annotations from fixture diagrams (test helper).

A fixture line may end with `# expect: rule-a, rule-b` (findings reported at that
line), a standalone `# expect-next-line: rule` annotates the line below, and a
`# fixture: --enable RULE` line passes options. Annotations are read from the
comments the parser hands over, never by scanning raw text.
"""

from __future__ import annotations

from collections import Counter
from pathlib import Path

from dagward.config import Settings
from dagward.syntax import parse_source

EXPECT = "expect:"
EXPECT_NEXT = "expect-next-line:"


def _rules(text: str) -> list[str]:
    return [r.strip() for r in text.split(",") if r.strip()]


def expectations(path: Path) -> tuple[Counter, list[str]]:
    """(Counter of (line, rule), fixture options) for one fixture file."""
    return expectations_in(path.read_bytes(), str(path))


def expectations_in(raw: bytes | str, name: str = "<text>") -> tuple[Counter, list[str]]:
    if isinstance(raw, str):
        raw = raw.encode("utf-8")
    expected: Counter = Counter()
    options: list[str] = []
    diagram, problem = parse_source(raw, name)
    if diagram is not None:
        comments = [(c.span.line, c.text) for c in diagram.comments]
    else:
        # the file does not parse; its annotations are still plain comments on lines
        text = raw.decode("utf-8", errors="replace")
        comments = [
            (i, line[line.index("#") :])
            for i, line in enumerate(text.splitlines(), start=1)
            if "#" in line
        ]
    for line, text in comments:
        for part in text.split("#")[1:]:
            body = part.strip()
            if body.startswith(EXPECT):
                expected.update((line, r) for r in _rules(body[len(EXPECT) :]))
            elif body.startswith(EXPECT_NEXT):
                expected.update((line + 1, r) for r in _rules(body[len(EXPECT_NEXT) :]))
            elif body.startswith("fixture:"):
                options.extend(body[len("fixture:") :].split())
    return expected, options


def settings_for(options: list[str]) -> Settings:
    enable, disable = [], []
    it = iter(options)
    for opt in it:
        if opt == "--enable":
            enable.append(next(it))
        elif opt == "--disable":
            disable.append(next(it))
        else:
            raise ValueError(f"unknown fixture option {opt}")
    return Settings().with_overrides(enable, disable)
