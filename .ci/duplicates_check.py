"""Fail when `duplicates` lists a pair of repeated places that nobody has reviewed.

Migrations are generated, applied history: their field lists repeat by nature and are never
rewritten, so a pair with both sides under a ``migrations`` folder is not counted. A pair named in
``duplicates_reviewed.toml`` (two files, and whether they may share the same text or only a shape)
was read and kept, for the reason written there. Anything else fails the run, as does a listing cut
short. Where the command is not on the machine, the check says so and passes.
"""

import re
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

REVIEWED = Path(__file__).with_name("duplicates_reviewed.toml")

ROW = re.compile(r"^D\d+ (?P<a>\S+):\d+-\d+ ~ (?P<b>\S+):\d+-\d+")


def generated(path: str) -> bool:
    return "/migrations/" in f"/{path}"


def reviewed() -> dict[frozenset[str], str]:
    pairs = tomllib.loads(REVIEWED.read_text())["pair"]
    return {frozenset(p["files"]): p["kind"] for p in pairs}


def accepted(line: str, a: str, b: str, kept: dict[frozenset[str], str]) -> bool:
    kind = kept.get(frozenset((a, b)))
    return kind == "text" or (kind == "shape" and " shape" in line)


def main() -> int:
    if shutil.which("duplicates") is None:
        print("duplicates: the command is not on this machine; the check is skipped.")
        return 0
    out = subprocess.run(
        ["duplicates", "--most", "200", "--seconds", "300"], capture_output=True, text=True, check=False
    ).stdout
    lines = out.splitlines()
    kept = reviewed()
    counted, skipped, known, trouble = [], 0, 0, []
    for line in lines:
        row = ROW.match(line)
        if row:
            if generated(row["a"]) and generated(row["b"]):
                skipped += 1
            elif accepted(line, row["a"], row["b"], kept):
                known += 1
            else:
                counted.append(line)
        elif line.startswith("incomplete:") or re.match(r"^\(\+\d+ more pairs\)", line):
            trouble.append(line)
    for line in counted + trouble:
        print(line)
    print(
        f"duplicates: {len(counted)} pairs not reviewed; {known} reviewed and kept ({REVIEWED.name}); "
        f"{skipped} between migrations (not counted)."
    )
    return 1 if counted or trouble else 0


if __name__ == "__main__":
    sys.exit(main())
