"""The guard and condition language of specs: guards, invariants and guarded transitions,
compiled to BDDs and to plain rows (this layer knows no StateTable)."""
