"""Pure-physics model of a series-lamp current limiter: lamps, circuit, judgement."""
