"""Quality control of a gas: purity, conformity to a specification, limiting densities."""
