"""Compare two month folders written by ``reportgen batch`` file by file (SHA-256).

Usage: python scripts/compare_outputs.py BEFORE_DIR AFTER_DIR

Prints one line per file that differs, is missing or is new, and exits 1 if any does;
exits 0 and prints the number of identical files otherwise.  Used to show that a
refactoring leaves every PDF, summary.csv and manifest.json byte-identical.
"""

from __future__ import annotations

import hashlib
import sys
from pathlib import Path


def file_hashes(folder: Path) -> dict[str, str]:
    """SHA-256 of every file under ``folder``, keyed by its path relative to it."""
    return {
        path.relative_to(folder).as_posix(): hashlib.sha256(path.read_bytes()).hexdigest()
        for path in sorted(folder.rglob("*"))
        if path.is_file()
    }


def main(argv: list[str]) -> int:
    if len(argv) != 2:
        print(__doc__.strip().splitlines()[2], file=sys.stderr)
        return 2
    before, after = (file_hashes(Path(arg)) for arg in argv)
    differences = []
    for name in sorted(before.keys() | after.keys()):
        if name not in after:
            differences.append(f"missing  {name}")
        elif name not in before:
            differences.append(f"new      {name}")
        elif before[name] != after[name]:
            differences.append(f"differs  {name}")
    for line in differences:
        print(line)
    if differences:
        return 1
    print(f"{len(before)} files, all byte-identical")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
