"""Problems that end a command with exit status 2 and a one-line message."""


class UsageProblem(Exception):
    """A usage, configuration or I/O problem; `str(e)` is the one-line message."""
