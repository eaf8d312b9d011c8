"""The solvsel terminal app: eight screens over one shared state, opened on the demo scenario.

``create_app`` builds the app for the command line and for the tests alike;
``run_app`` runs it.  Each screen lives in its own module; styles in app.tcss.
"""

from __future__ import annotations

from textual.app import App
from textual.binding import Binding
from textual.theme import Theme

from .base import SCREENS
from .state import Session

THEME = Theme(
    name="solvsel-bench",
    primary="#3d8c95",
    secondary="#b8893a",
    accent="#d9a441",
    warning="#e0a030",
    error="#d9534f",
    success="#6aa36f",
    foreground="#e6e2d8",
    background="#161b20",
    surface="#1e252c",
    panel="#26303a",
    dark=True,
)


class SolvselApp(App):
    """Choose carriers, blends and emulsifier systems for the current target."""

    CSS_PATH = "app.tcss"
    TITLE = "solvsel"
    COMMAND_PALETTE_BINDING = "ctrl+p"
    BINDINGS = [Binding(f"{key.lower()},alt+{i}", f"switch_mode('{mode}')", title, show=False)
                for i, (mode, key, title) in enumerate(SCREENS, 1)] + [
        Binding("f9", "toggle_keys", "Keys"),
        Binding("ctrl+q", "quit", "Quit", priority=True),
    ]

    def __init__(self, session: Session) -> None:
        from .carriers import CarriersScreen
        from .emulsion import EmulsionScreen
        from .extraction import ExtractionScreen
        from .hspmap import MapScreen
        from .limits import LimitsScreen
        from .mixing import MixingScreen
        from .tables import TablesScreen
        from .target import TargetScreen

        self.MODES = {
            "tables": TablesScreen, "target": TargetScreen, "carriers": CarriersScreen,
            "map": MapScreen, "emulsion": EmulsionScreen, "limits": LimitsScreen,
            "mixing": MixingScreen, "extraction": ExtractionScreen,
        }
        super().__init__()
        self.session = session
        self.start_mode: str | None = None
        self.register_theme(THEME)
        self.theme = THEME.name

    def action_toggle_keys(self) -> None:
        """Show or hide the panel listing every key of the screen in front."""
        from textual.widgets import HelpPanel

        if self.screen.query(HelpPanel):
            self.action_hide_help_panel()
        else:
            self.action_show_help_panel()

    def get_system_commands(self, screen):
        """The command palette (Ctrl+P): every screen by name, then the keys panel and quitting."""
        from textual.app import SystemCommand

        for i, (mode, key, title) in enumerate(SCREENS, 1):
            yield SystemCommand(f"Go to {title}", f"the {title} screen ({key} or Alt+{i})",
                                lambda m=mode: self.switch_mode(m))
        yield SystemCommand("Fold or show the form", "the form of this screen as one line (Ctrl+O)",
                            lambda: self.screen.run_action("toggle_form"))
        yield SystemCommand("Keys", "show or hide every key of this screen (F9)", self.action_toggle_keys)
        yield SystemCommand("Quit", "leave solvsel (Ctrl+Q)", self.exit)

    def on_mount(self) -> None:
        self.switch_mode(self.start_mode or ("carriers" if self.session.target is not None else "tables"))
        error = self.session.notes.pop("start_error", None)
        if error is not None:
            from .dialogs import show_error

            show_error(self, error)


def create_app(catalog=None, scenario=None, start: str | None = None) -> SolvselApp:
    """The app on ``catalog`` (default: the bundled tables) and ``scenario`` (default: the demo).

    The target starts as the scenario's solute.  ``start`` names the first
    screen (``tables``, ``target``, ``carriers``, ``map``, ``emulsion``, ``limits``, ``mixing``, ``extraction``).
    """
    from ..data.catalog import load_catalog
    from ..errors import SolvselError

    cat = catalog if catalog is not None else load_catalog()
    problem = None
    if scenario is None:
        from ..data.scenario import load_scenario

        try:
            scenario = load_scenario()
        except SolvselError as exc:  # a broken scenario file: open on the tables, say why
            problem = exc
    session = Session(catalog=cat, scenario=scenario)
    if problem is not None:
        session.notes["start_error"] = problem
    part = session.scenario_part("target")
    name = part.get("solute")
    if name:
        from ..science.target import target_from_solute

        try:
            session.set_target(target_from_solute(cat, name))
        except SolvselError as exc:  # a user's own scenario naming an unknown solute
            session.notes["start_error"] = exc
    app = SolvselApp(session)
    if start:
        app.start_mode = start
    return app


def run_app(catalog=None) -> int:
    """Run the UI on the demo scenario; returns the exit code."""
    app = create_app(catalog=catalog)
    app.run()
    return int(app.return_code or 0)
