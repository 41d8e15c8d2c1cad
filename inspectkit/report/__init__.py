"""Signed PDF inspection reports: the content gathered, rendering, signing and verification."""
