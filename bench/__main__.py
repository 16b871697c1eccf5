"""``python -m bench``: every speed figure in one run (see bench/run_all.py)."""

from bench.run_all import main

main()
