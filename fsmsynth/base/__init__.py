"""What every layer may use and that imports nothing of fsmsynth: the exceptions, the immutable
mapping used in records, and the rules for names of machines, ports and states."""
