"""Physics layer: pure functions with explicit units in their names (no I/O, no nuclide lookups)."""
