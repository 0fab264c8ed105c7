"""The regimes: dimensionless numbers, the catalogue of published laws and their
conditions, dimensional analysis and the predicted crossovers."""
