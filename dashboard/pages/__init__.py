"""Dash pages (imported by Dash from their files; not to be imported directly)."""
