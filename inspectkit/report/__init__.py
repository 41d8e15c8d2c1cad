"""Signed PDF inspection reports: the report model, rendering, signing and verification."""
