"""Active control on top of the transfer impedances: optimal control strengths and the strengths of every signal."""
