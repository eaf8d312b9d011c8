"""Modal dialogs: a user's mistake is shown here, with the error's title and message."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Static


class ErrorDialog(ModalScreen[None]):
    """Shows a :class:`~solvsel.errors.SolvselError` (or any message) until dismissed."""

    BINDINGS = [Binding("escape,enter", "dismiss", "Close")]

    def __init__(self, title: str, message: str) -> None:
        super().__init__()
        self.error_title = title
        self.error_message = message

    def compose(self) -> ComposeResult:
        with Vertical(id="error-box"):
            yield Static(self.error_title, id="error-title")
            yield Static(self.error_message, id="error-message", markup=False)
            yield Button("Close", id="error-close", variant="primary")

    def on_mount(self) -> None:
        self.query_one("#error-close", Button).focus()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        event.stop()
        self.dismiss()

    async def action_dismiss(self, result=None) -> None:  # noqa: D102
        self.dismiss()


def show_error(app, exc: BaseException) -> None:
    """Open the error dialog for ``exc`` (its ``title`` and one-paragraph message)."""
    title = getattr(exc, "title", None) or type(exc).__name__
    app.push_screen(ErrorDialog(str(title), str(exc)))
