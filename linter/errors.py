"""Problems that end a command with exit status 2 and a one-line message."""


class UsageProblem(Exception):
    """A usage, configuration or I/O problem; `str(e)` is the one-line message."""


class DiagramHasErrors(Exception):
    """The diagram has errors that stop a command which reasons about it (exit 1).

    Errors in a diagram are findings, not usage problems: the command line prints
    them (as `check` would) and exits 1.
    """

    def __init__(self, result):
        self.result = result
        super().__init__(f"{result.file} has errors")
