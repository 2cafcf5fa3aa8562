"""sheetgen: size soft-on / soft-off faders for low-voltage DC lighting and print the sheets."""

__version__ = "0.1.0"
