"""The science stage: pure physics, no I/O and no knowledge of files, manifests or reports.

Thermochemistry (RRHO / quasi-RRHO), relative energies and populations, localization indices,
Marcus–Hush parameters and rate formulas, uncertainty propagation, the conversion of
measurements into comparable quantities, and geometry helpers (alignment, distances). Each
function is small and names its published source. It may import only the shared vocabulary
(dossier.units, dossier.errors, dossier.records); every later stage may import it.
"""
