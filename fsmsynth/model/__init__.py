"""What every stage talks about: the state table, the storage kinds (D, T, JK, SR) as data,
and each state's rows as regions of the input space."""
