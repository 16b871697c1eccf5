"""Benchmarks: scripts that print figures beside floors measured in the same run (never tests)."""
