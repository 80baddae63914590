"""The designs the acoustic-centre study compares, in the order ``explore.nc`` stores them.

Names, dimensions, units and long names of the explore variables are declared
in :data:`bemcheck.results.schema.EXPLORE`.
"""

CENTRE_DESIGNS = ("predicted", "as_designed", "centred", "reoptimised")
