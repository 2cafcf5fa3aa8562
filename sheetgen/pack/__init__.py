"""Build nights: sizing many designs side by side and the merged kit list."""
