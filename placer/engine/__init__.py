"""Computational engines of placer: pure search, no input or output."""
