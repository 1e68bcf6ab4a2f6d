"""fieldcheck: rate existing timber posts and temporary wood shores on site.

A screening aid for a competent person. Local codes, the authority having
jurisdiction and a licensed engineer govern.
"""

__version__ = "0.2.2"
ENGINE_VERSION = __version__
