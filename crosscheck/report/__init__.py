"""Output formats.  Each reads the same `ClaimOutcome` objects and nothing else."""
