"""A large one-off fuzz campaign over the targets of tests/test_fuzz.py (not part of the suite).

Runs test_fuzz.py with every example count multiplied by ``--scale`` and, instead of
stopping at the first surprise, tallies the outcome of every call: ok, warned (NaN with
a NoDebyeTemperatureWarning), rejected (a ModeheatError) and each unexpected exception
or unwarned NaN, which are printed by kind with the modeheat line that raised.  Usage, from the repository root::

    python tests/fuzz_campaign.py --scale 5
"""

from __future__ import annotations

import argparse
import collections
import json
import os
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

__all__ = ["main"]

_EXPECTED = {"ok", "warned", "rejected"}
_NUMBER = re.compile(r"[-+]?\d[\d.e+-]*")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--scale", type=int, default=5, help="factor on every example count of test_fuzz.py")
    args = parser.parse_args()
    root = Path(__file__).resolve().parent.parent
    with tempfile.TemporaryDirectory() as folder:
        log = Path(folder) / "outcomes.jsonl"
        env = dict(os.environ, MODEHEAT_FUZZ_LOG=str(log), MODEHEAT_FUZZ_SCALE=str(args.scale))
        start = time.perf_counter()
        subprocess.run(
            [sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", "tests/test_fuzz.py"],
            cwd=root,
            env=env,
            check=False,
        )
        seconds = time.perf_counter() - start
        records = [json.loads(line) for line in log.read_text(encoding="utf-8").splitlines()] if log.exists() else []
    by_target = collections.defaultdict(collections.Counter)
    surprises = collections.Counter()
    for r in records:
        kind = r["outcome"] if r["outcome"] in _EXPECTED else "UNEXPECTED"
        by_target[r["target"]][kind] += 1
        if kind == "UNEXPECTED":
            # numbers and shapes vary between examples of one kind of surprise
            head, _, message = r["outcome"].partition(": ")
            what = (head + ": " + _NUMBER.sub("#", message))[:120]
            surprises[(r["target"], what)] += 1
    print(f"\nscale {args.scale}: {len(records)} calls in {seconds:.0f} s")
    print(f"{'target':45s} {'calls':>7s} {'ok':>7s} {'warned':>7s} {'rejected':>8s} {'UNEXPECTED':>10s}")
    for target, c in sorted(by_target.items()):
        print(f"{target:45s} {sum(c.values()):7d} {c['ok']:7d} {c['warned']:7d} {c['rejected']:8d} {c['UNEXPECTED']:10d}")
    print(f"\n{sum(surprises.values())} unexpected outcomes, {len(surprises)} distinct:")
    for (target, what), n in surprises.most_common():
        print(f"{n:6d}  {target}: {what}")


if __name__ == "__main__":
    main()
