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


def alt_digits_as_sent() -> None:
    """Let Alt+digit reach the app as ``alt+1`` ... ``alt+9`` in terminals that send it as ESC and the digit
    (xterm, tmux, most terminals of Linux): Textual's table of key sequences reads ESC and a digit as the
    character a macOS keyboard types with Option and that digit ("™" for ESC 2, "£" for ESC 3), so Alt+2
    never arrived as alt+2 there.  Without those entries, ESC and a digit take the parser's rule for ESC
    before a character: the key with Alt.  (The table is Textual's own; if a version has none, nothing
    changes and the F-keys and the command palette still switch screens.)"""
    from textual import _ansi_sequences

    table = getattr(_ansi_sequences, "ANSI_SEQUENCES_KEYS", None)
    if isinstance(table, dict):
        for digit in "0123456789":
            table.pop("\x1b" + digit, None)


class SolvselApp(App):
    """Choose carriers, blends and emulsifier systems for the current target."""

    CSS_PATH = "app.tcss"
    TITLE = "solvsel"
    COMMAND_PALETTE_BINDING = "ctrl+p"
    # priority: Alt+digit comes with the digit as its character, which a text field with the cursor would
    # otherwise take as typed
    BINDINGS = [Binding(f"{key.lower()},alt+{i}", f"switch_mode('{mode}')", title, show=False, priority=True)
                for i, (mode, key, title) in enumerate(SCREENS, 1)] + [
        Binding("f9", "toggle_keys", "Keys"),
        Binding("ctrl+s", "save_work", "Save work", show=False, priority=True),
        Binding("ctrl+l", "open_work", "Open work", show=False, priority=True),
        Binding("f10", "export", "Export report", show=False),
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
        alt_digits_as_sent()
        self.session = session
        self.start_mode: str | None = None
        self.register_theme(THEME)
        self.theme = THEME.name

    def check_action(self, action: str, parameters) -> bool | None:
        """No switching of screens while a dialog or the command palette is open (it would stay behind on the
        screen left, and open again over itself): the keys go to the dialog."""
        from textual.screen import ModalScreen

        if action == "switch_mode" and isinstance(self.screen, ModalScreen):
            return False
        return True

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
        yield SystemCommand("Save the work", "the target, the forms of every screen, as a workspace file (Ctrl+S)",
                            self.action_save_work)
        yield SystemCommand("Open a workspace", "a saved piece of work: its target and forms (Ctrl+L)",
                            self.action_open_work)
        yield SystemCommand("Export a report", "the result on screen with its figures: .md, .html, .json, .csv "
                            "(F10)", self.action_export)
        yield SystemCommand("Keys", "show or hide every key of this screen (F9)", self.action_toggle_keys)
        yield SystemCommand("Quit", "leave solvsel (Ctrl+Q)", self.exit)

    def _ask(self, title: str, hint: str, value: str, then) -> None:
        """Ask for a file name, then call ``then(path)``; a user's mistake opens the error dialog."""
        from ..errors import SolvselError
        from .dialogs import PathDialog, show_error

        def done(path: str | None) -> None:
            if not path:
                return
            try:
                said = then(path)
            except SolvselError as exc:
                show_error(self, exc, {"path": "file name"})
                return
            self.notify(said, timeout=4)

        self.push_screen(PathDialog(title, hint, value), done)

    def action_save_work(self) -> None:
        from .workfile import save_work

        self._ask("Save the work", "Workspace file (JSON; the previous version is kept as FILE.bak)",
                  self.session.notes.get("workspace", "work.solvsel.json"),
                  lambda path: f"saved: {save_work(self, path)}")

    def action_open_work(self) -> None:
        from .workfile import open_work

        def opened(path: str) -> str:
            name = open_work(self, path)
            self.session.notes["workspace"] = path
            return f"opened: {name or path}"

        self._ask("Open a workspace", "Workspace file saved by solvsel", self.session.notes.get("workspace", ""), opened)

    def action_export(self) -> None:
        from ..errors import InputError
        from ..jobs.report import write_report

        got = getattr(self.screen, "report_of", lambda: None)()
        if got is None:
            self.notify("nothing to export on this screen yet", severity="warning", timeout=3)
            return
        job, title, text, result = got

        def export(path: str) -> str:
            if not path.strip():
                raise InputError("give a file name", param="path")
            paths = write_report(path, title, job, text, result.to_dict(), catalog=self.session.catalog, job=job)
            return f"report written: {paths[0]} (and {len(paths) - 1} files beside it)"

        self._ask(f"Export a report: {title}", "Report file (.md; .html, .json, .csv and the figures beside it)",
                  f"{job}-report.md", export)

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
