"""Ground layer: errors, units, the Cantera species data, fuels. Imports nothing above it."""
