"""Bundled catalogue files (packaged as placer.catalogs)."""
