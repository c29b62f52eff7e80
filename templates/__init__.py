"""Jinja templates and CSS of the calculation records (package data)."""
