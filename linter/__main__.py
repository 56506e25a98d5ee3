"""`python -m linter` runs the dagward command line."""

from .cli import run

run()
