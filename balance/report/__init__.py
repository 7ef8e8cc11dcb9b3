"""Reporting: text tables for the terminal, the JSON layout, and the cautions every report carries."""

import sys as _sys

if "IPython" in _sys.modules:   # inside IPython or Jupyter: show solutions as tables (balance.report.html)
    from balance.report.html import register_notebook_display as _register_notebook_display
    _register_notebook_display()
