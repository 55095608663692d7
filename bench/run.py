"""Run every benchmark and print one line per figure: name, value, unit, baseline, ratio, target.

Each ``bench/bench_*.py`` module exposes ``run(quick: bool) -> list[dict]`` returning rows with
keys ``name, value, unit, baseline, ratio, target`` and optionally ``ok`` (the verdict against
the target: PASS / MISS) and ``spread`` (min/median/max of the runs behind the value);
baselines are measured in the same run, interleaved with the figure. The last lines list
every target with its verdict. Benchmarks never decide whether the test suite passes.

Usage: ``python bench/run.py [--quick] [--only NAME]``
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import sys
import time
import traceback
from pathlib import Path

HERE = Path(__file__).resolve().parent


def _fmt(v: object) -> str:
    if v is None:
        return "-"
    if isinstance(v, float):
        return f"{v:.4g}"
    return str(v)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small sizes; ends within a minute")
    ap.add_argument("--only", metavar="NAME", help="run only bench_NAME.py")
    args = ap.parse_args(argv)
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    sys.path.insert(0, str(HERE.parent))
    files = sorted(HERE.glob("bench_*.py"))
    if args.only:
        files = [f for f in files if f.stem == f"bench_{args.only}"]
    print(f"{'figure':<56} {'value':>10} {'unit':<6} {'baseline':>10} {'ratio':>8}  "
          f"{'target':<10} {'verdict':<7} min/median/max")
    failed = 0
    verdicts: list[tuple[str, str, str, str]] = []
    for f in files:
        spec = importlib.util.spec_from_file_location(f.stem, f)
        mod = importlib.util.module_from_spec(spec)
        t0 = time.perf_counter()
        try:
            spec.loader.exec_module(mod)
            rows = mod.run(quick=args.quick)
        except Exception:  # noqa: BLE001 - one broken benchmark must not hide the others
            failed += 1
            print(f"{f.stem}: FAILED\n{traceback.format_exc()}", file=sys.stderr)
            continue
        for r in rows:
            ok = r.get("ok")
            verdict = "" if ok is None else ("PASS" if ok else "MISS")
            print(f"{r['name']:<56} {_fmt(r.get('value')):>10} {r.get('unit', ''):<6} "
                  f"{_fmt(r.get('baseline')):>10} {_fmt(r.get('ratio')):>8}  "
                  f"{_fmt(r.get('target')):<10} {verdict:<7} {r.get('spread', '')}")
            if ok is not None:
                shown = r.get("ratio") if r.get("ratio") is not None else r.get("value")
                verdicts.append((r["name"], _fmt(shown), _fmt(r.get("target")), verdict))
        print(f"  ({f.stem} took {time.perf_counter() - t0:.1f} s)")
    if verdicts:
        print("\ntargets (value is the ratio where there is one):")
        for name, shown, target, verdict in verdicts:
            print(f"  {verdict:<5} {name:<56} {shown:>10}  target {target}")
        misses = sum(v[3] == "MISS" for v in verdicts)
        print(f"  {len(verdicts) - misses} of {len(verdicts)} targets met")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
