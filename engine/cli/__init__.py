"""The headless command line (reduce, sweep, export) and the engine benchmark."""

from .commands import COMMAND_SUMMARIES, COMMANDS, Writer, main

__all__ = ["COMMANDS", "COMMAND_SUMMARIES", "Writer", "main"]
