"""Parametric gmsh scripts, one per body kind, installed as bemcheck.geometry_scripts."""
