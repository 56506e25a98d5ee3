"""The example blocks of a rule docstring (`Bad::`, `Good::`, `Data::`), for the tests
that lint them."""

from __future__ import annotations

import textwrap

from dagward.data import DataOptions, table_from_csv_text


def block(doc: str, label: str) -> str:
    """The indented block after `Bad::`, `Good::` or `Data::`."""
    lines = doc.split("\n")
    start = lines.index(f"{label}::") + 1
    out = []
    for line in lines[start:]:
        if line and not line.startswith("    "):
            break
        out.append(line)
    return textwrap.dedent("\n".join(out)).strip("\n") + "\n"


def data_for(doc: str) -> dict:
    """Keyword arguments for `lint_source` when the docstring holds a `Data::` table."""
    if "\nData::\n" not in doc:
        return {}
    return {"table": table_from_csv_text(block(doc, "Data"), "data.csv"),
            "data_options": DataOptions()}  # fmt: skip
