"""Random and mutated input files for the fuzz test and its longer run in benchmarks/.

Seeds are the shipped examples and layouts; mutations are the edits a
careless or hostile hand makes: a value swapped for a tricky one, characters
YAML gives meaning to inserted, lines deleted, doubled or re-indented.
"""

from __future__ import annotations

from pathlib import Path

from hypothesis import strategies as st

ROOT = Path(__file__).resolve().parents[2]
SPEC_SEEDS = [p.read_text(encoding="utf-8") for p in sorted((ROOT / "examples").glob("*.yaml"))]
LAYOUT_SEEDS = [p.read_text(encoding="utf-8") for p in sorted((ROOT / "layouts").glob("*.yaml"))]
EVENT_SEED = """\
title: Spring build night
date: 2027-03-20
venue: Community workshop
spares: 10 %
builds:
  - spec: van.yaml
    builders: [Ana, Bo, "Zoë"]
  - design: {supply: 12 V, load: {kind: led, current: 20 mA, vf: 3.1 V}, fade: {in: 1 s, out: 2 s}}
    count: 3
"""

TRICKY = [
    "", "~", "null", "yes", "on", "0", "-1", "1e400", "1.0e+400", "9" * 5000, "1" * 300 + " V", "0x1F",
    "!!int x", "!!float abc", "!!bool maybe", "!!timestamp t", "!str x", "&a x", "*a", "*nope", "[", "]", "{", "}",
    "[1, [2, [3]]]", "{a: {b: {c: d}}}", "'x", '"\\ud800"', '"\\x00"', "|", ">", "? a", "<<: {x: 1}", "- a",
    "2027-02-30", "2027-13-01", "12 V", "12 VAC", "230 V", "20 mA", "-20 mA", "3 A", "1.5 s", "0 s", "120 s",
    "1 000 000 V", "12,5 V", "4k7", "NaN V", "inf A", "1e-400 s", "auto", "npm", "mosfet", "led", "lamp",
    "ground", "A4", "letter", "A6", "0.01", "5", "500", "501", "0.1 mm", "1000 mm", "5 %", "101 %", "true",
    "\u200b", "Ana\u202e", "\u0633\u0627\u0631\u0629", "山田", "\t", "#", "%", "@", "`", "\ufeff",
]
SIGNIFICANT = ":-[]{},&*!|>'\"%@`#?\t\n \\"

tricky = st.sampled_from(TRICKY) | st.text(max_size=12)


@st.composite
def mutated(draw, seeds: list[str]) -> str:
    """One seed file with one to four edits."""
    text = draw(st.sampled_from(seeds))
    for _ in range(draw(st.integers(1, 4))):
        lines = text.split("\n")
        k = draw(st.integers(0, max(len(lines) - 1, 0)))
        op = draw(st.sampled_from(["value", "value", "insert", "delete", "double", "indent", "drop"]))
        if op == "value" and ":" in lines[k]:
            head = lines[k].split(":", 1)[0]
            lines[k] = f"{head}: {draw(tricky)}"
        elif op == "insert":
            at = draw(st.integers(0, len(lines[k])))
            chars = draw(st.text(alphabet=SIGNIFICANT, min_size=1, max_size=3) | tricky)
            lines[k] = lines[k][:at] + chars + lines[k][at:]
        elif op == "delete" and lines[k]:
            at = draw(st.integers(0, len(lines[k]) - 1))
            lines[k] = lines[k][:at] + lines[k][at + draw(st.integers(1, 4)):]
        elif op == "double":
            lines.insert(k, lines[k])
        elif op == "indent":
            lines[k] = " " * draw(st.integers(1, 3)) + lines[k]
        elif op == "drop":
            del lines[k]
        text = "\n".join(lines)
    return text


@st.composite
def random_spec(draw) -> str:
    """A spec assembled from its own keys with values drawn from the tricky pool."""
    keys = draw(st.lists(st.sampled_from(["title", "supply", "trigger", "load", "fade", "ambient", "topology",
                                          "install", "extra"]), max_size=9))
    out = []
    for key in keys:
        if key == "load":
            fields = draw(st.lists(st.sampled_from(["kind", "current", "vf", "colour", "per_string", "strings",
                                                    "power", "rated", "count"]), max_size=6))
            out.append("load: {" + ", ".join(f"{f}: {draw(tricky)!s}" for f in fields) + "}")
        elif key == "fade":
            out.append(f"fade: {{in: {draw(tricky)}, out: {draw(tricky)}}}")
        else:
            out.append(f"{key}: {draw(tricky)}")
    return "\n".join(out) + "\n"


specs = mutated(SPEC_SEEDS) | random_spec()
events = mutated([EVENT_SEED])
layouts = mutated(LAYOUT_SEEDS)
