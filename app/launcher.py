"""The ``portcut`` command: headless sub-commands go to engine.cli.commands, anything else opens
the window.

Qt is imported only when the window (or a PNG) is wanted, so ``portcut reduce`` runs on a machine
with no display and no Qt libraries.
"""

from __future__ import annotations

import difflib
import sys
from pathlib import Path

import portcut

_HELP = """\
usage: portcut [FILE] [--screenshot OUT.png] [window options]
       portcut COMMAND [FILE] [options]

Portcut: sketch a linear circuit, outline a region, read its Thevenin and Norton equivalents.

commands:
{commands}
  (none)   open the workbench on FILE, or on the bundled demo

Run "portcut COMMAND --help" for a command's options and "portcut --help-window" for the
window's. Without FILE a command reads the bundled demo sheet.

options:
  -h, --help     show this message and exit
  --version      print the version and exit
"""


def main(argv: list[str] | None = None) -> int:
    """Entry point of the console script; returns the process exit code."""
    args = sys.argv[1:] if argv is None else list(argv)
    from portcut.engine.cli import commands as cli

    first = args[0] if args else ""
    if first in ("-h", "--help"):
        lines = (f"  {name:<8} {summary}" for name, summary in cli.COMMAND_SUMMARIES.items())
        sys.stdout.write(_HELP.format(commands="\n".join(lines)))
        return 0
    if first == "--version":
        print(f"portcut {portcut.__version__}")
        return 0
    if first in cli.COMMANDS:
        from .raster import PNG_WRITERS

        return cli.main(args, writers=PNG_WRITERS)
    if first and not first.startswith("-") and _not_a_sheet(first):
        sys.stderr.write(f"portcut: {_unknown(first, sorted(cli.COMMANDS))}\n")
        return 2
    from .main import run

    return run(["--help"] if first == "--help-window" else args)


def _not_a_sheet(word: str) -> bool:
    """True when ``word`` can only have been meant as a command: no such file, no suffix, no
    folder in it (a missing ``sheet.json`` is the window's to report)."""
    path = Path(word)
    return not path.exists() and not path.suffix and len(path.parts) == 1


def _unknown(word: str, commands: list[str]) -> str:
    close = difflib.get_close_matches(word, commands, n=1)
    hint = f'did you mean "{close[0]}"?' if close else f"the commands are {', '.join(commands)}"
    return f'"{word}" is not a command nor a sheet file; {hint}'


if __name__ == "__main__":
    sys.exit(main())
