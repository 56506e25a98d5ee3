"""Suggestions ("did you mean ...?") for a name that is not known (rules, variables).

Close spellings come from difflib's ratio (Ratcliff/Obershelp matching, as in
the standard library), plus names that contain the given one as a part
(`collider` -> `collider-adjusted`) when no spelling is close, and a match that
differs only in case.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable


def close_names(name: str, known: Iterable[str], n: int = 3) -> list[str]:
    """Up to `n` known names close to `name`, best first."""
    known = list(dict.fromkeys(known))
    lowered = {k.lower(): k for k in known}
    if name.lower() in lowered:
        return [lowered[name.lower()]]
    # one close spelling is a clear hint; several would be a guessing game
    out = difflib.get_close_matches(name, known, n=1, cutoff=0.6)
    if not out and len(name) >= 3:
        # a part of a kebab- or snake-case name: "collider" for "collider-adjusted"
        for k in known:
            parts = k.lower().replace("_", "-").split("-")
            if (name.lower() in parts or k.lower().startswith(name.lower())) and k not in out:
                out.append(k)
    return out[:n]


def did_you_mean(name: str, known: Iterable[str]) -> str:
    """`; did you mean `x`?` (or `x` or `y`), or "" when nothing is close."""
    close = close_names(name, known)
    if not close:
        return ""
    shown = " or ".join(f"`{c}`" for c in close)
    return f"; did you mean {shown}?"
