"""Arranging blades on a disc: an exact search with a proof, an anytime search with a bound."""
