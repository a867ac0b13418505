"""Presentation: plain-text, Markdown, LaTeX and CSV tables, JSON and the HTML report."""
