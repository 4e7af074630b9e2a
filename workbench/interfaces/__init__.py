"""Interfaces on top: the command line, widget panels, Plotly charts, the HTML report."""
