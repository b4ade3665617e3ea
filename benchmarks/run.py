"""Run every benchmark and print its table: python benchmarks/run.py [--quick]

Benchmarks are never part of the tests: they time things, the tests assert
correctness. Each benchmark reports ratios against a reference computed in
the same process, so a loaded machine shifts both sides alike.
"""
import argparse
import importlib
import os
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--quick", action="store_true", help="smaller sizes, for a smoke run")
    ap.add_argument("names", nargs="*", help="benchmark modules (default: all bench_*.py)")
    args = ap.parse_args()
    names = args.names or sorted(f[:-3] for f in os.listdir(HERE)
                                 if f.startswith("bench_") and f.endswith(".py"))
    for name in names:
        mod = importlib.import_module(name)
        t0 = time.perf_counter()
        print(f"\n=== {name} ===")
        mod.main(quick=args.quick)
        print(f"({name}: {time.perf_counter() - t0:.1f} s)")


if __name__ == "__main__":
    main()
