"""Bundled reference spectra (CSV); see README for provenance."""
