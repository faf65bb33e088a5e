"""The circuit graph of a meshed layout (nodes, branches, RWG halves, sublayers) and its loop
basis. Imports only :mod:`copperpath.geometry`."""
