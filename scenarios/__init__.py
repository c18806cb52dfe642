"""Bundled example scenarios (TOML)."""
