"""The frame every screen shares: the screen strip, the target line, the form summary and the key footer.

Keys common to every screen: F1-F8 and Alt+1-8 switch screens (terminals send no
distinct Ctrl+digit), Ctrl+P opens the command palette, Ctrl+O folds the screen's
form into a one-line summary and back, Ctrl+T / Ctrl+B go to the next / previous
tab of a screen that has tabs (and put the cursor in the tab's first field).
"""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import Footer, Static, TabbedContent

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
    ("extraction", "F8", "Extraction"),
]

#: Below this many columns a screen opens with its form folded into its summary line.
NARROW = 120


class BenchScreen(Screen):
    """Base of the screens: adds the frame and redraws when the target changes."""

    MODE = ""
    #: Labels of this screen's fields by the request field they fill (``{"temp_C": "temperature"}``);
    #: an error about a request field is shown with its label (else :data:`.dialogs.FIELD_NAMES`).
    FIELD_LABELS: dict[str, str] = {}
    #: id of the screen's form pane ("" when it has none) and of its tabs ("" when it has none).
    FORM = ""
    TABS = ""
    #: The field that takes the cursor when a tab opens, by tab id.
    FIRST_FIELD: dict[str, str] = {}
    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (NARROW, "-wide")]

    BINDINGS = [
        Binding("ctrl+o", "toggle_form", "Form", priority=True),
        Binding("ctrl+t", "tab(1)", "Next tab", priority=True),
        Binding("ctrl+b", "tab(-1)", "Previous tab", show=False, priority=True),
    ]

    def __init__(self) -> None:
        super().__init__()
        self._seen_version = -1

    @property
    def session(self):
        return self.app.session

    def compose_frame_top(self) -> ComposeResult:
        yield ScreenStrip(SCREENS, self.MODE, classes="strip")
        yield TargetLine(classes="target-line")
        if self.FORM:
            yield Static("", id="form-summary", classes="form-summary")

    def compose_frame_bottom(self) -> ComposeResult:
        yield Footer()

    def on_mount(self) -> None:
        self.session.screens[self.MODE] = self
        if self.FORM and self.app.size.width < NARROW:
            self.fold_form(True)

    def form_to_session(self) -> None:
        """Put the form's values in the session (``session.overrides``) for a workspace to save."""

    def session_to_form(self) -> None:
        """Fill the form again from the session (an opened workspace) and recompute."""

    def check_action(self, action: str, parameters) -> bool | None:
        """Hide the keys a screen has no use for (no form, no tabs) from the footer."""
        if action == "toggle_form":
            return bool(self.FORM)
        if action == "tab":
            return bool(self.TABS)
        return True

    # ---------------------------------------------------------------- the form and its summary
    def form_summary(self) -> str:
        """The form in one line (each screen says what matters in its own form)."""
        return ""

    def show_summary(self) -> None:
        """Refresh the summary line (shown while the form is folded)."""
        for line in self.query("#form-summary"):
            line.update(f"{self.form_summary()}   (Ctrl+O: show the form)")

    def fold_form(self, folded: bool) -> None:
        self.set_class(folded, "-form-folded")
        self.show_summary()

    def action_toggle_form(self) -> None:
        if not self.FORM:
            return
        folded = not self.has_class("-form-folded")
        self.fold_form(folded)
        if not folded:
            from textual.widgets import Input, Select

            first = next(iter(self.query_one(f"#{self.FORM}").query("Input, Select")), None)
            if isinstance(first, (Input, Select)):
                self.call_after_refresh(first.focus)

    # ---------------------------------------------------------------- tabs
    def action_tab(self, step: int) -> None:
        """Open the next (``step`` 1) or previous (-1) tab and put the cursor in its first field."""
        if not self.TABS:
            return
        tabs = self.query_one(f"#{self.TABS}", TabbedContent)
        ids = [pane.id for pane in tabs.query("TabPane")]
        i = ids.index(tabs.active) if tabs.active in ids else 0
        tabs.active = ids[(i + step) % len(ids)]

    def on_tabbed_content_tab_activated(self, event: TabbedContent.TabActivated) -> None:
        field = self.FIRST_FIELD.get(event.pane.id or "")
        if field:
            self.call_after_refresh(self._focus_first, event.pane.id, self.query_one(field))

    def _focus_first(self, pane: str, widget) -> None:
        """Focus a tab's first field if that tab is still the one in front (a field of another tab would
        bring its tab to the front: tabs flipped quickly would then chase each other for ever)."""
        if self.query_one(f"#{self.TABS}", TabbedContent).active == pane and self.focused is not widget:
            self.set_focus(widget)  # at once, not queued: a queued focus could land after the next tab key

    # ---------------------------------------------------------------- target
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
