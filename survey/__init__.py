"""leosite survey engine: site, horizon, fleet, sky tracks, assessment.

Nothing in this package imports the text UI (``tui``); dependencies run one way,
inputs -> engine -> outputs.
"""

__version__ = "0.1.0"
