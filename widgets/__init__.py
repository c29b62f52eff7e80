"""Notebook widgets to edit orbit cases live (see the widgets issue)."""
