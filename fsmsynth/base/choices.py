"""The words options take, in one place that imports nothing: the command line builds its
parser from them without loading the library (start-up time), and the library's modules
take them from here."""

UNUSED_POLICIES = ("dont-care", "safe")
"""What unused state codes do: don't cares, or go to reset."""
LOGIC_METHODS = ("heuristic", "exact", "auto")
"""Two-level minimizers: Espresso, proven minimum covers, or exact up to 10 variables."""
DEFAULT_ENCODINGS = ("binary", "gray", "one-hot")
"""The encodings ``compare`` tries unless told."""
TIMER_CHOICES = ("counters", "unrolled", "cheaper")
"""How timers and counters are built: counter blocks, unrolled into states, or the cheaper."""
DEFAULT_STORAGES = ("d", "de", "jk", "sr", "t", "best")
"""The storage kinds ``compare`` tries unless told: every kind, and the cheapest per bit."""
