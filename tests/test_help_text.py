"""Every option of every command explains itself in `--help` (common practice for
command-line tools: an option listed without a word of help is a guess for the user)."""

from __future__ import annotations

import argparse

import pytest
from dagward.cli import COMMANDS, build_parser

# Accepted for old scripts but no longer shown: the output it asked for is the default.
HIDDEN = {("independencies", "--ascii")}


def _subparser(command: str) -> argparse.ArgumentParser:
    parser = build_parser(command)
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return sub.choices[command]


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_every_option_has_help(command):
    missing = []
    for action in _subparser(command)._actions:
        if not action.option_strings:
            continue  # positionals are named by their metavar (FILE, PATH)
        name = action.option_strings[-1]
        if (command, name) in HIDDEN:
            assert action.help == argparse.SUPPRESS
            continue
        if not action.help or action.help == argparse.SUPPRESS:
            missing.append(name)
    assert missing == [], f"{command}: options without help: {missing}"


def test_check_method_is_explained():
    """`check --help` once listed --method with no text."""
    help_text = _subparser("check").format_help()
    method = help_text.split("\n  --method", 1)[1].split("\n  --", 1)[0]
    assert "pearson (linear)" in " ".join(method.split())
