"""``python -m tests.bench``: every speed figure in one run (see tests/bench/run_all.py)."""

from tests.bench.run_all import main

main()
