"""The ``leosite`` command: every engine command, plus ``leosite ui``.

The command line lives in ``survey.cli``; this wrapper hands it the text UI, so
dependencies keep running one way (tui -> survey)."""

from __future__ import annotations

import sys

from survey import cli
from survey.pipeline import FleetChoice


def start_ui(args) -> int:
    from .app import LeositeApp
    from .session import Assessor

    assessor = Assessor(FleetChoice(args.shells, args.tle), args.start, args.hours, args.step, args.min_elevation)
    LeositeApp(args.site, assessor).run()
    return 0


def main(argv=None) -> int:
    return cli.main(argv, ui=start_ui)


if __name__ == "__main__":
    sys.exit(main())
