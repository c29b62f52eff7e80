"""Trade studies: parameter sweeps, Monte Carlo dispersions, candidate tables."""
