"""Crystal pipeline: read a structure, find its space group and units, predict its k = 0 modes."""
