"""Run every benchmark module (bench_*.py) in this folder, or those named on the command line."""

import importlib
import pkgutil
import sys
from pathlib import Path


def main(names):
    here = Path(__file__).parent
    found = sorted(m.name for m in pkgutil.iter_modules([str(here)]) if m.name.startswith("bench_"))
    chosen = [n for n in found if not names or any(x in n for x in names)]
    for name in chosen:
        print(f"== {name}")
        importlib.import_module(f"benchmarks.{name}").run()
        print()


if __name__ == "__main__":
    main(sys.argv[1:])
