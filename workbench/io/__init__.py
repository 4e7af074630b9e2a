"""Readers and writers at the edge: files in, domain objects out (and results out to files)."""
