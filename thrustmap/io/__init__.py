"""Reading and writing thrustmap's inputs and outputs: attitudes, layers, grids."""
