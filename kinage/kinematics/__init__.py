"""Monte Carlo draws of a star's present phase space."""
