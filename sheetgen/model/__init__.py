"""The netlist: parts, pins and nets, the one description every layer above reads."""
