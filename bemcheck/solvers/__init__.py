"""Acoustic models of one layout: the free-field monopole model, the boundary-element solver, and active control."""
