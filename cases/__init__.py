"""Example case files shipped with bemcheck (installed as bemcheck.examples)."""
