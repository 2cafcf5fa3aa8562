"""Choosing values and proving them: the search, tolerance draws, analysis and the builder's words."""
