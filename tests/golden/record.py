"""Write tests/golden/golden.json from the current code (run only on purpose, after a
deliberate change of a model: ``.venv/bin/python tests/golden/record.py``)."""

from __future__ import annotations

import json
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path[:0] = [str(HERE), str(HERE.parent), str(HERE.parents[1])]

from cases import app_cases, cases, platform_fingerprint, run_app_case, run_case, write_ride  # noqa: E402


def main() -> None:
    with tempfile.TemporaryDirectory() as folder:
        ride = write_ride(Path(folder) / "ride.csv")
        results = {}
        for name, args in cases(ride).items():
            code, output = run_case(args)
            if code != 0:
                raise SystemExit(f"{name}: exit code {code}")
            results[name] = output
    text = json.dumps(results, indent=1, sort_keys=True).replace(folder, "RIDE_FOLDER")
    (HERE / "golden.json").write_text(text + "\n")
    app = {name: run_app_case(*case) for name, case in app_cases().items()}
    (HERE / "golden_app.json").write_text(json.dumps(app, indent=1, sort_keys=True) + "\n")
    (HERE / "platform.json").write_text(json.dumps(platform_fingerprint(), indent=1) + "\n")
    print(f"wrote {len(results)} command-line cases and {len(app)} page cases")


if __name__ == "__main__":
    main()
