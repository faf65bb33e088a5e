"""Everything written to disk: exports (result.json, CSV, Touchstone, SPICE, VTU), pictures,
the reports and the ``inspect`` outputs, each file written atomically. Imports the analysis
layer and below."""
