"""Reading what people write: the YAML tree with lines, quantities, specs, events, layouts."""
