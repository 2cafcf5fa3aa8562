"""Reading input files at the door: bounded files, a YAML node tree with lines, one wording for problems."""
