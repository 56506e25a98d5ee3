"""Shared test helpers (not test modules)."""
