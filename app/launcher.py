"""The ``portcut`` command: headless sub-commands go to engine.cli, anything else opens the window.

Qt is imported only when the window is wanted, so ``portcut reduce`` runs on a machine with no
display and no Qt libraries.
"""

from __future__ import annotations

import sys


def main(argv: list[str] | None = None) -> int:
    """Entry point of the console script; returns the process exit code."""
    args = sys.argv[1:] if argv is None else list(argv)
    from portcut.engine import cli

    if args and args[0] in cli.COMMANDS:
        return cli.main(args)
    from portcut.app.main import run

    return run(args)


if __name__ == "__main__":
    sys.exit(main())
