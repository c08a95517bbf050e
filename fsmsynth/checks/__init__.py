"""Proofs and reports on a design: equivalence with the table (verify, simulate, SAT checks),
invariants, glitches, timing, and what a table leaves open."""
