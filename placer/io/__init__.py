"""Readers and writers: files, the JSON shapes and the history database (the edges of placer)."""
