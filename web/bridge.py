"""The one Python function the web page's worker calls: JSON text in, JSON text out.

Packed into the page's package zip as the top-level module ``nmrcalc_bridge``.
The worker passes the request as a string argument, so no Python source is
ever assembled from user input.  The work is done by
``nmrcalc.api.handle_json``, the same text entry the CLI's ``api`` command uses.
"""

from nmrcalc.api import handle_json as bridge

__all__ = ["bridge"]
