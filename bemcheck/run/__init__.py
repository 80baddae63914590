"""A run: planning the sweep, solving tasks (in process or on a Dask cluster), storing parts, and finishing the results."""
