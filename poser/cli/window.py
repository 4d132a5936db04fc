"""``poser [ARM.toml] [--snapshot OUT.png] …``: the posing window (or a picture of it)."""

from __future__ import annotations

import os
import sys

from poser.cli.args import UsageError

__all__ = ["add_arguments", "run", "has_display"]


def add_arguments(main):
    main.add_argument("arm", nargs="?", help="arm file to open (default: the Heron 6 demo arm)")
    main.add_argument("--snapshot", metavar="OUT.png", help="render the window to a PNG file and exit")
    main.add_argument("--joints", metavar="V1,V2,…", help="joint values to show, in the arm's units")
    main.add_argument("--target", metavar="X,Y,Z[,R,P,Y]", help="target tool pose to solve for, in the arm's units")
    main.add_argument("--size", metavar="WxH", default="1280x800", help="window size for --snapshot (default 1280x800)")


def has_display() -> bool:
    """Whether Qt can open a window here (Qt aborts the process when it cannot)."""
    if os.environ.get("QT_QPA_PLATFORM"):
        return True
    if sys.platform.startswith("linux"):
        return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))
    return True


def run(args) -> int:
    if not has_display():
        if not args.snapshot:
            raise UsageError(
                "no display to open the window on (DISPLAY is not set); run it on a desktop, under "
                "'xvfb-run -a -s \"-screen 0 1600x1000x24 +extension GLX +render\" poser …', "
                "or render a picture with --snapshot OUT.png"
            )
        # A snapshot needs no screen: Qt's offscreen platform draws the 2D three-view.
        os.environ["QT_QPA_PLATFORM"] = "offscreen"
    try:
        from poser.ui.app import run as run_window
    except ImportError as exc:
        print(f"poser: error: the window cannot start: {exc}", file=sys.stderr)
        return 2
    return run_window(args)
