"""Renderers: they read a Report and draw it; they never compute physics."""
