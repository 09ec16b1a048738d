"""leosite text UI (Textual).  Built on ``survey``; ``survey`` never imports this.

The screens arrive with their own issue; this package is the placeholder the
layers are wired around.
"""
