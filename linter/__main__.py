"""`python -m dagward` runs the dagward command line."""

from .cli import run

run()
