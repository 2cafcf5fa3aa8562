"""What leaves the program: JSON, terminal summary, SPICE deck, atomic file writes, the PDFs."""
