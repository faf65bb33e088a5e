"""Partial elements: the thickness-averaged kernel, triangle-pair quadrature, the partial
inductance and resistance of RWG branch currents, and via barrels. Imports nothing else of the
solver."""
