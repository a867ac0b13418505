"""Free-unit analysis: point group, symmetrised geometry, vibrational species."""
