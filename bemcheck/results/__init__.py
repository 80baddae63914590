"""What a run leaves behind: the results dataset, its files, and atomic writes."""
