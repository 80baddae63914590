"""bemcheck: check a free-field monopole design of active control against BEM."""
__version__ = "0.1.0"
