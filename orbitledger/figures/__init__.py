"""Bokeh figure builders shared by the editor widgets and the records."""
