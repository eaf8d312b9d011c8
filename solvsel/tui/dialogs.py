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


#: The library's messages name the command-line option a value came from; in
#: the UI the same value comes from a field, named here as its label says.
FIELD_NAMES = {
    "chain": "dilution chain",
    "dose": "dose",
    "already": "amount already in the food",
    "category": "food category",
    "jurisdiction": "jurisdiction",
    "temp": "temperature",
    "max-components": "largest blend (liquids)",
    "bp-range": "boiling window",
    "min-flash": "lowest flash point",
    "exclude": "leave out",
    "reject": "keep out of solution",
    "use": "use",
    "oil": "oil phase",
    "emulsifiers": "emulsifiers to pair",
    "rhlb": "your own required HLB",
    "brix": "sugar (Brix)",
    "dilution": "dilution",
    "droplet-um": "droplet diameter",
    "hsp": "dD, dP, dH (and R0)",
    "smiles": "SMILES",
    "good-at-most": "good at a score of at most",
    "good-at-least": "good at a score of at least",
    "solute": "target",
}


def plain_message(message: str) -> str:
    """``message`` with each ``--option`` replaced by the name of the UI field it stands for.

    >>> plain_message("--chain: stage 2 'drink 1+x': expected a number")
    "dilution chain: stage 2 'drink 1+x': expected a number"
    """
    import re

    def field(m):
        name = m.group(1)
        return FIELD_NAMES.get(name, name.replace("-", " "))

    return re.sub(r"(?<![\w-])--([a-z][a-z0-9-]*)", field, message)


def field_label(param: str, labels: dict[str, str] | None = None) -> str:
    """The label of the UI field a request field is typed into (the screen's own labels first)."""
    return ((labels or {}).get(param) or FIELD_NAMES.get(param) or FIELD_NAMES.get(param.replace("_", "-"))
            or param.replace("_", " "))


def show_error(app, exc: BaseException, labels: dict[str, str] | None = None) -> None:
    """Open the error dialog for ``exc`` (its ``title`` and one-paragraph message, in the UI's words)."""
    title = getattr(exc, "title", None) or type(exc).__name__
    describe = getattr(exc, "describe", None)
    text = describe(lambda p: field_label(p, labels)) if describe else str(exc)
    app.push_screen(ErrorDialog(str(title), plain_message(text)))
