"""What a solved sweep means: current density, inductance and loss shares, bottlenecks,
switching estimates of the converter, and the comparison of layout variants. Imports the solve
layer and below; draws and writes nothing."""
