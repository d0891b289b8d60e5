"""Command line: thin wrappers, one module per command (see ``main.COMMANDS``)."""
