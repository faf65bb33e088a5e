"""Assembly of the partial-element system and its solution per frequency (the sweep), with the
result it produces. Imports the partial elements and the graph."""
