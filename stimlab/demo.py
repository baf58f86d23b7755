"""``make demo``: set up the demo data and show what stimlab does with it.

Writes the demo display's profile (built from the shipped measurement files) into the data folder and walks
through a few conversions on it, as a researcher would at the command line.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

from .cli import main as cli
from .demo_data import demo_profile
from .profile import save_profile


def main() -> int:
    data = Path(os.environ.get("STIMLAB_DATA", "instance"))
    data.mkdir(parents=True, exist_ok=True)
    profile_path = data / "vale_street_b12.json"
    save_profile(demo_profile(), profile_path)
    steps = [
        ["display", "show", str(profile_path)],
        ["convert", "--display", str(profile_path), "--dkl", "0,0.08,0"],
        ["convert", "--display", str(profile_path), "--dkl", "0,0,0.6"],
        ["convert", "--display", str(profile_path), "--cone-contrast", "0.3,0,0"],
    ]
    for args in steps:
        print(f"\n$ stimlab {' '.join(args)}")
        sys.stdout.flush()
        status = cli(args)
        if status not in (0, 1):
            return status
    return 0


if __name__ == "__main__":
    sys.exit(main())
