"""The bench: limiter rigs, lamps, instruments, power-up tests, readings and verdicts."""
