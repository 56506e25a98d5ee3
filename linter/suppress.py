"""`# dagward: allow RULE[, RULE...]` comments, read from the comments the parser kept."""

from __future__ import annotations

from dataclasses import dataclass

from .model import Comment, Diagram, Name, Span

DIRECTIVE = "dagward:"


@dataclass(frozen=True)
class AllowComment:
    comment: Comment
    rules: tuple[Name, ...]  # each rule name with its position inside the comment
    malformed: bool  # `# dagward: ...` that is not an `allow` list


def allow_comments(diagram: Diagram) -> list[AllowComment]:
    found = []
    for c in diagram.comments:
        body = c.text[1:]
        stripped = body.lstrip()
        if not stripped.startswith(DIRECTIVE):
            continue
        offset = 1 + (len(body) - len(stripped)) + len(DIRECTIVE)
        rest = c.text[offset:]
        words = rest.lstrip()
        offset += len(rest) - len(words)
        if not words.startswith("allow") or (len(words) > 5 and not words[5].isspace()):
            found.append(AllowComment(c, (), True))
            continue
        offset += 5
        names = []
        # the list ends at a further `#`, so a remark may follow it
        for part in words[5:].split("#", 1)[0].split(","):
            name = part.strip()
            if name:
                col = c.span.column + offset + part.index(name)
                names.append(Name(name, Span(c.span.line, col, c.span.line, col + len(name))))
            offset += len(part) + 1
        found.append(AllowComment(c, tuple(names), not names))
    return found


def allowed_by_line(diagram: Diagram) -> dict[int, frozenset[str]]:
    out: dict[int, set[str]] = {}
    for a in allow_comments(diagram):
        out.setdefault(a.comment.span.line, set()).update(n.text for n in a.rules)
    return {line: frozenset(rules) for line, rules in out.items()}
