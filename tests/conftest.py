import os

from hypothesis import HealthCheck, settings

settings.register_profile(
    "default", deadline=None, suppress_health_check=[HealthCheck.too_slow], derandomize=True)
settings.register_profile(
    "thorough", deadline=None, suppress_health_check=[HealthCheck.too_slow], max_examples=500)
settings.load_profile(os.environ.get("FSMSYNTH_HYPOTHESIS", "default"))
