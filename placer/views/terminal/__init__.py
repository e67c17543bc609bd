"""The terminal sheets (rich), one module per command family."""
