"""Helpers shared by the tests: exact series and numpy-made meshes."""
