"""dagward's version (pyproject.toml says the same; tests/test_install.py holds them equal)."""

__version__ = "0.1.0"
