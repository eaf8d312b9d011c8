"""The terminal UI of solvsel (Textual).

One module a screen; the screens call the library (catalog, target, blends,
hlb, emulsion, compliance) and show its frozen-dataclass results, so nothing
is computed in a widget.  :func:`solvsel.tui.app.create_app` builds the app
for the command line and for the tests alike.
"""
