"""solvers"""
