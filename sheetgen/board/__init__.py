"""The build board: where every part of a design goes on a stripboard or a perfboard.

- ``model.py``: the Board (holes, cuts, links, placements, wire points) and hole names
- ``place.py``: the layout engine, generic over any netlist
- ``proof.py``: nets rebuilt from copper, cuts and links, compared with the netlist
- ``words.py``: the cut list, link list and placing steps in words
"""

from sheetgen.board.model import Board, Placement, Terminal, hole_name
from sheetgen.board.place import layout

__all__ = ["Board", "Placement", "Terminal", "hole_name", "layout"]
