"""The reconciliation engine: fixes against the plan, per fix and per leg."""
