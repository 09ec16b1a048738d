"""The ``leosite`` command: every engine command, plus ``leosite ui``.

The command line lives in ``survey.cli``; this module adds the ``ui`` command
to it (``survey.api.Command``), so dependencies keep running one way (tui -> survey)."""

from __future__ import annotations

import sys
from pathlib import Path

from survey.api import (
    Command,
    FleetChoice,
    InputError,
    add_run_options,
    check_run_args,
    command_line,
    load_site,
    resolve_site_path,
)


def _ui_arguments(parser) -> None:
    parser.add_argument("site", metavar="SITE", nargs="?", type=Path, help="site file (site.toml) to open")
    add_run_options(parser)


def start_ui(args) -> int:
    check_run_args(args)
    if getattr(args, "heading", None) is not None:  # the text UI edits the heading on its Site tab
        raise InputError("command line: --heading: not for the text UI: type the heading on the Site tab")
    if args.site is not None:
        args.site = resolve_site_path(args.site)  # demo:NAME opens a working copy of that demo
        load_site(args.site)  # a bad site file is one line and exit 2, before the screen opens
    from .app import LeositeApp
    from .session import Assessor

    assessor = Assessor(FleetChoice(args.shells, args.tle), args.start, args.hours, args.step, args.min_elevation)
    LeositeApp(args.site, assessor).run()
    return 0


UI = Command("ui", "the text UI: survey, edit and report a site on screen",
                 "Open the text UI on a site file, or with no SITE on a start screen "
                 "(new site, demo sites, open a file).", _ui_arguments, start_ui)


def main(argv=None) -> int:
    return command_line(argv, extra=(UI,))


if __name__ == "__main__":
    sys.exit(main())
