"""nmrcalc: an offline NMR calculator and simulator (pure Python, standard library only)."""

__version__ = "0.1.0"
