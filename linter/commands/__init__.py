"""One module per command: HELP, FORMATS, add_arguments(parser), run(args) -> int."""
