"""The exact engine: placement arrays, the search, the integer model and the trade-off front."""
