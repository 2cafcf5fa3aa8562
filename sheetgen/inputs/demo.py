"""The built-in scenario behind ``sheetgen demo``: a sheet in one command, no files needed.

The spec is kept as YAML text, exactly what a user would write, and read by the
same checker as any spec file, so the demo can never drift from the format.
"""

from __future__ import annotations

SOURCE = "<built-in demo>"
OUTPUT = "sheetgen-demo.pdf"

#: A camper van's awning light: three strings of two warm-white LEDs over the side
#: door that glow up with the door switch and fade away once it closes.
SPEC_TEXT = """\
title: Camper van awning light (demo)
supply: 12 V                # 11-14.6 V: engine off to charging
trigger: positive           # the door switch feeds +12 V when the door opens
load:
  kind: led
  current: 15 mA            # per string
  vf: 2.9 V
  per_string: 2
  strings: 3
fade:
  in: 2 s
  out: 3 s
ambient: 45 °C              # a van roof in the sun
install: vehicle
"""


def demo_spec():
    """The demo as a checked Spec."""
    from sheetgen.inputs.spec import parse_spec

    return parse_spec(SPEC_TEXT, source=SOURCE)
