"""Run every ratio benchmark: ``python benchmarks/run.py [NAME ...]``.

Imports each ``benchmarks/bench_<name>.py``, calls its ``run() -> dict``, writes
``benchmarks/results/<name>.json``, prints a summary table and exits with status 1 when any
benchmark reports ``"passed": false`` (or fails to run). Names given on the command line limit the
run to those benchmarks.
"""

from __future__ import annotations

import importlib.util
import json
import sys
import time
import traceback
from pathlib import Path
from typing import Any

HERE = Path(__file__).resolve().parent


def discover(names: list[str] | None = None, directory: Path = HERE) -> list[Path]:
    """The benchmark files in ``directory``, sorted by name, limited to ``names`` when given."""
    files = sorted(Path(directory).glob("bench_*.py"))
    if names:
        wanted = {n.removeprefix("bench_").removesuffix(".py") for n in names}
        files = [f for f in files if f.stem.removeprefix("bench_") in wanted]
    return files


def run_one(path: Path) -> dict[str, Any]:
    """Import one benchmark file and return its result (``passed`` false if it fails to run)."""
    name = path.stem.removeprefix("bench_")
    started = time.perf_counter()
    try:
        spec = importlib.util.spec_from_file_location(f"bench_{name}", path)
        module = importlib.util.module_from_spec(spec)
        spec.loader.exec_module(module)
        result = dict(module.run())
    except Exception as exc:  # noqa: BLE001 - one broken benchmark must not hide the others
        traceback.print_exc()
        result = {"passed": False, "error": f"{type(exc).__name__}: {exc}"}
    result.setdefault("passed", False)
    result["seconds"] = round(time.perf_counter() - started, 3)
    return result


def _figure(result: dict[str, Any], *keys: str) -> str:
    for key in keys:
        if key in result and isinstance(result[key], int | float):
            return f"{result[key]:.3g}"
    return "-"


def main(argv: list[str] | None = None, directory: Path = HERE) -> int:
    """Run the benchmarks in ``directory`` (results in its ``results/``); returns the exit status."""
    names = list(sys.argv[1:] if argv is None else argv)
    files = discover(names, directory)
    results = Path(directory) / "results"
    if not files:
        print("no benchmarks found" + (f" matching {', '.join(names)}" if names else ""))
        return 1 if names else 0
    results.mkdir(parents=True, exist_ok=True)
    rows = []
    for path in files:
        name = path.stem.removeprefix("bench_")
        print(f"running {name} ...", flush=True)
        result = run_one(path)
        (results / f"{name}.json").write_text(json.dumps(result, indent=2, default=str) + "\n")
        rows.append((name, _figure(result, "ratio"), _figure(result, "target"), result))
    width = max(len("benchmark"), *(len(r[0]) for r in rows))
    print()
    print(f"{'benchmark':<{width}}  {'ratio':>8}  {'target':>8}  result   seconds")
    for name, ratio, target, result in rows:
        verdict = "passed" if result["passed"] else "FAILED"
        print(f"{name:<{width}}  {ratio:>8}  {target:>8}  {verdict:<7}  {result['seconds']:>7.1f}")
    failed = [r[0] for r in rows if not r[3]["passed"]]
    print()
    print(f"{len(rows) - len(failed)} of {len(rows)} benchmarks passed; results in {results}")
    return 1 if failed else 0


if __name__ == "__main__":
    raise SystemExit(main())
