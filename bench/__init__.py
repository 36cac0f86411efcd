"""Benchmarks: speed and memory measured on the machine at hand, printed as Markdown
tables (never asserted in tests: a shared machine is too noisy for that)."""
