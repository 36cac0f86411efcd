"""Run every benchmark in turn (slow: tens of minutes on two cores) and print its tables.

Each one also runs alone: ``python -m bench.operations``, ``bench.splitting``, ``bench.seq2seq_speed``,
``bench.aclsum_eval``, ``bench.learned_aclsum``, ``bench.site_latency``, ``bench.aclsum_aspects``,
``bench.hostile_inputs``, ``bench.writer``, ``bench.night``.
"""

import importlib
import sys

BENCHMARKS = (
    "operations", "splitting", "seq2seq_speed", "aclsum_eval", "learned_aclsum", "site_latency", "aclsum_aspects", "hostile_inputs", "writer",
    "night",
)

for name in BENCHMARKS:
    print(f"\n## bench.{name}\n", flush=True)
    module = importlib.import_module(f"bench.{name}")
    if name in ("operations", "hostile_inputs"):
        module.main()
    else:
        module.main([])
    sys.stdout.flush()
