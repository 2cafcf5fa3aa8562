"""Circuits the sizer can build: load models and the topology registry with its drawing recipes."""
