"""The ``poser`` command line.

    poser [ARM.toml] [--snapshot OUT.png] [--joints V1,...] [--target X,Y,Z[,R,P,Y]]
    poser check ARM.toml
    poser fk ARM.toml --joints V1,V2,... [--frames] [--json]
    poser ik ARM.toml --xyz X,Y,Z [--rpy R,P,Y] [--near V1,...] [--json]
    poser reach ARM.toml TARGETS.csv [--near V1,...] [--json] [--out REPORT.csv]
    poser workspace ARM.toml [--samples N] [--json] [--png OUT.png] [--height Z]
    poser place ARM.toml TARGETS.csv --x A..B --y C..D [--z E..F] [--yaw G..H] [--step S] [--yaw-step T]
                [--top K] [--json] [--png COVERAGE.png] [--out-arm PLACED.toml] [--scheduler ADDRESS] [--workers N]
    poser cube ARM.toml [--rpy R,P,Y] [--plane P] [--samples N] [--json] [--png OUT.png]

Every value is read and printed in the arm's own units.  Bad input — and an
output that cannot be written — ends with exit status 2 and one line
``poser: error: ...`` on stderr, never a traceback; exit 1 is kept for "not
reachable".  One module per subcommand; shared helpers in :mod:`.args`.
"""

from __future__ import annotations

import argparse
import difflib
import os
import sys

from poser import __version__
from poser.cli import check, cube, fk, ik, place, reach, window, workspace
from poser.cli.args import Parser, UsageError, glue_negative_lists, load_arm, parse_list

__all__ = ["main", "entry", "UsageError", "load_arm", "parse_list", "SUBCOMMANDS"]

SUBCOMMANDS = {"check": check, "fk": fk, "ik": ik, "reach": reach, "workspace": workspace, "place": place,
               "cube": cube}


def build_parsers():
    common = dict(formatter_class=argparse.RawDescriptionHelpFormatter)
    lines = "\n".join(f"  poser {name} ARM.toml …".ljust(33) + mod.HELP for name, mod in SUBCOMMANDS.items())
    main = Parser(
        prog="poser",
        description="Poser — pose serial robot arms: forward and inverse kinematics, limits, singularities.\n\n"
        "  poser [ARM.toml]               open the posing window (default demo arm without ARM)\n"
        f"{lines}\n\n"
        "Values are in the arm's own units (see [units] in the arm file).\n"
        "Poser plans nothing for a real robot: verify every result on the robot's controller.",
        **common,
    )
    main.add_argument("--version", action="version", version=f"poser {__version__}")
    window.add_arguments(main)
    subs = {name: mod.add_parser(lambda n, **kw: Parser(prog=f"poser {n}", **kw)) for name, mod in SUBCOMMANDS.items()}
    return main, subs


def _tolerant_output():
    """Never fail on a terminal that cannot show a character (an ASCII or Latin-1 locale): escape it."""
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.reconfigure(errors="backslashreplace")
        except (AttributeError, ValueError, OSError):
            pass


def _looks_like_a_command(word: str) -> str | None:
    """The subcommand ``word`` was probably meant to be (a typo of one, not a file), else None."""
    if os.path.exists(word) or word.startswith("-") or "." in os.path.basename(word) or os.sep in word:
        return None
    close = difflib.get_close_matches(word, list(SUBCOMMANDS), n=1, cutoff=0.6)
    return close[0] if close else None


def _run(argv) -> int:
    main_parser, subs = build_parsers()
    if argv and argv[0] in SUBCOMMANDS:
        args = subs[argv[0]].parse_args(argv[1:])
        return SUBCOMMANDS[argv[0]].run(args)
    if argv and not argv[0].startswith("-"):
        guess = _looks_like_a_command(argv[0])
        if guess is not None:
            raise UsageError(f"unknown command {argv[0]!r}; did you mean {guess!r}? "
                             f"(commands: {', '.join(SUBCOMMANDS)}; or give an arm file to open the window)")
    args = main_parser.parse_args(argv)
    return window.run(args)


def _silence_stdout():
    """After a failed write, point stdout at /dev/null so the interpreter's last flush stays quiet."""
    try:
        fd = os.open(os.devnull, os.O_WRONLY)
        os.dup2(fd, sys.stdout.fileno())
        os.close(fd)
    except (OSError, ValueError, AttributeError):
        pass


def main(argv=None) -> int:
    _tolerant_output()
    argv = glue_negative_lists(list(sys.argv[1:] if argv is None else argv))
    try:
        code = _run(argv)
        sys.stdout.flush()  # a write that fails must fail here, as an error, not as an answer
        return code
    except UsageError as exc:
        print(f"poser: error: {exc}", file=sys.stderr)
        return 2
    except SystemExit as exc:  # --help and --version
        try:
            sys.stdout.flush()
        except OSError as err:
            print(f"poser: error: cannot write the output: {err.strerror or err}", file=sys.stderr)
            _silence_stdout()
            return 2
        return int(exc.code or 0)
    except KeyboardInterrupt:
        print("poser: interrupted", file=sys.stderr)
        return 130
    except OSError as exc:  # stdout closed (a pipe) or full (a disk): no answer was given
        if exc.errno is None and not isinstance(exc, BrokenPipeError):
            raise
        _silence_stdout()
        try:
            print(f"poser: error: cannot write the output: {exc.strerror or exc}", file=sys.stderr)
        except OSError:
            pass
        return 2


def entry() -> None:
    """Console-script entry point."""
    sys.exit(main())


if __name__ == "__main__":
    entry()
