"""Data tables of nmrcalc, each with its citation in its module docstring."""
