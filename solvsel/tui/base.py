"""The frame every screen shares: the screen strip, the target line and the key footer."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.screen import Screen
from textual.widgets import Footer

from .widgets import ScreenStrip, TargetLine

#: (mode, key label, title) of every screen, in the order of their keys.
SCREENS = [
    ("tables", "F1", "Tables"),
    ("target", "F2", "Target"),
    ("carriers", "F3", "Carriers & blends"),
    ("map", "F4", "Map"),
    ("emulsion", "F5", "Emulsion"),
    ("limits", "F6", "Limits"),
    ("mixing", "F7", "Mixing"),
]


class BenchScreen(Screen):
    """Base of the screens: adds the frame and redraws when the target changes."""

    MODE = ""
    #: Labels of this screen's fields by the request field they fill (``{"temp_C": "temperature"}``);
    #: an error about a request field is shown with its label (else :data:`.dialogs.FIELD_NAMES`).
    FIELD_LABELS: dict[str, str] = {}

    def __init__(self) -> None:
        super().__init__()
        self._seen_version = -1

    @property
    def session(self):
        return self.app.session

    def compose_frame_top(self) -> ComposeResult:
        yield ScreenStrip(SCREENS, self.MODE, classes="strip")
        yield TargetLine(classes="target-line")

    def compose_frame_bottom(self) -> ComposeResult:
        yield Footer()

    def on_screen_resume(self) -> None:
        for line in self.query(TargetLine):
            line.show(self.session.target)
        if self._seen_version != self.session.version:
            self._seen_version = self.session.version
            self.target_changed()

    def target_changed(self) -> None:
        """Called when the screen shows and the target changed since it last did."""

    def on_screen_strip_chosen(self, message: ScreenStrip.Chosen) -> None:
        self.app.switch_mode(message.mode)

    def guard(self, fn, *args, **kwargs):
        """Call the library; a user's mistake opens the error dialog and returns None."""
        from ..errors import SolvselError
        from .dialogs import show_error

        try:
            return fn(*args, **kwargs)
        except SolvselError as exc:
            show_error(self.app, exc, self.FIELD_LABELS)
            return None
