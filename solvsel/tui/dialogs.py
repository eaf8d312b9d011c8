"""Modal dialogs: a user's mistake is shown here, with the error's title and message."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Static


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


class PathDialog(ModalScreen[str | None]):
    """Asks for a file name (save, open, export); dismissed with the text, or None when cancelled."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, title: str, hint: str, value: str = "") -> None:
        super().__init__()
        self.title_text, self.hint, self.value = title, hint, value

    def compose(self) -> ComposeResult:
        with Vertical(id="path-box"):
            yield Static(self.title_text, id="path-title")
            yield Static(self.hint, id="path-hint", markup=False)
            yield Input(self.value, id="path-input", compact=True)

    def on_mount(self) -> None:
        self.query_one("#path-input", Input).focus()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        event.stop()
        self.dismiss(event.value.strip() or None)

    def action_cancel(self) -> None:
        self.dismiss(None)


#: Labels of request fields for screens that do not name a field in their own ``FIELD_LABELS``.
FIELD_NAMES = {
    "chain": "dilution chain",
    "dose": "dose",
    "already": "amount already in the food",
    "category": "food category",
    "jurisdiction": "jurisdiction",
    "temp_C": "temperature",
    "max_components": "largest blend (liquids)",
    "bp_min_C": "boiling window",
    "bp_max_C": "boiling window",
    "min_flash_C": "lowest flash point",
    "exclude": "leave out",
    "rejects": "keep out of solution",
    "use": "use",
    "oil": "oil phase",
    "emulsifiers": "emulsifiers to pair",
    "rhlb": "your own required HLB",
    "brix": "sugar (Brix)",
    "dilution": "dilution",
    "droplet_um": "droplet diameter",
    "hsp": "dD, dP, dH (and R0)",
    "smiles": "SMILES",
    "good_at_most": "good at a score of at most",
    "good_at_least": "good at a score of at least",
    "solute": "target",
    "path": "file name",
}


def field_label(param: str, labels: dict[str, str] | None = None) -> str:
    """The label of the UI field a request field is typed into (the screen's own labels first)."""
    return (labels or {}).get(param) or FIELD_NAMES.get(param) or param.replace("_", " ")


def show_error(app, exc: BaseException, labels: dict[str, str] | None = None) -> None:
    """Open the error dialog for ``exc`` (its ``title`` and one-paragraph message, in the UI's words)."""
    title = getattr(exc, "title", None) or type(exc).__name__
    describe = getattr(exc, "describe", None)
    text = describe(lambda p: field_label(p, labels)) if describe else str(exc)
    app.push_screen(ErrorDialog(str(title), text))
