"""PDF rendering: reads a Report and draws it; never computes physics."""
