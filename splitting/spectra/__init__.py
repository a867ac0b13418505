"""Measured spectra: reading peak lists and spectra, finding and fitting peaks."""
