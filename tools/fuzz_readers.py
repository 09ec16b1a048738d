"""The long fuzz run: every reader's property test with many more generated
inputs than the suite runs, and a fresh random seed each time.

    python tools/fuzz_readers.py                  # 20,000 inputs per reader
    python tools/fuzz_readers.py --examples 100000 --seeded

The suite runs the same tests (tests/test_hostile_inputs.py) with 2,000 seeded
inputs each.  A failure prints hypothesis's smallest failing input: add it to
tests/corpus/ with the message the user should see, then fix the reader.
Exit status: pytest's.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--examples", type=int, default=20_000, help="generated inputs per reader (default 20,000)")
    p.add_argument("--seeded", action="store_true", help="the suite's fixed seed instead of a random one")
    p.add_argument("-k", dest="select", help="only the tests matching this pytest -k expression")
    args = p.parse_args(argv)
    env = dict(os.environ, LEOSITE_FUZZ_EXAMPLES=str(args.examples))
    if not args.seeded:
        env["LEOSITE_FUZZ_RANDOM"] = "1"
    cmd = [sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", "--durations=0",
           "tests/test_hostile_inputs.py", "-k", args.select or "reader or command_line",
           "--hypothesis-show-statistics"]
    return subprocess.call(cmd, cwd=ROOT, env=env)


if __name__ == "__main__":
    sys.exit(main())
