"""Reporting: text tables for the terminal, the JSON layout, and the cautions every report carries."""
