"""The simulator: device equations, modified nodal analysis, transient and DC, measurement, heat."""
