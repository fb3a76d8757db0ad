"""Physics layer: pure functions over nuclide data, explicit units in every name."""
