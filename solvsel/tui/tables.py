"""Tables screen: browse every bundled table, filter it, and read one row with its sources.

The filter box takes the grammar of ``--where`` (:func:`solvsel.data.query.where`);
the detail pane lists every value of the selected row and the citation of
each source id it names (:meth:`Catalog.source`).
"""

from __future__ import annotations

import math

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.widgets import DataTable, Input, OptionList, Static
from textual.widgets.option_list import Option

from .base import BenchScreen
from .widgets import CautionBox, fill_table, shorten

#: (table name, title) in the order of the chooser.
TABLES = [
    ("solvents", "Solvents and carriers"),
    ("solutes", "Solutes"),
    ("emulsifiers", "Emulsifiers"),
    ("oils", "Oils (required HLB)"),
    ("weighting_agents", "Weighting agents"),
    ("regulations", "Regulations"),
    ("purposes", "Purposes of the product"),
    ("sources", "Sources"),
]

#: Columns shown in the grid, the deciding values first and the long texts last, where the screen
#: cuts them (the detail pane shows every column).
GRID_COLUMNS = {
    "solvents": ["name", "dD_MPa05", "dP_MPa05", "dH_MPa05", "bp_C", "flash_C", "vm_cm3_mol", "roles", "cas", "origin"],
    "solutes": ["name", "dD_MPa05", "dP_MPa05", "dH_MPa05", "r0_MPa05", "hsp_basis", "category", "cas", "origin"],
    "emulsifiers": ["name", "hlb", "ionic_type", "ins_number", "hlb_method", "mw_g_mol", "cas"],
    "oils": ["name", "rhlb_ow", "density_g_cm3", "ripening", "kind", "cas"],
    "weighting_agents": ["name", "density_g_cm3", "ripening", "ins_number", "cas"],
    "regulations": ["substance", "jurisdiction", "status", "limit", "unit", "use", "food_category", "purposes",
                    "checked_on", "rule"],
    "purposes": ["id", "label", "description"],
    "sources": ["id", "kind", "citation"],
}

#: Column headers in words with their units (the table's column id is in the detail pane).
HEADERS = {
    "name": "name", "substance": "substance", "cas": "CAS", "dD_MPa05": "dD MPa½", "dP_MPa05": "dP MPa½",
    "dH_MPa05": "dH MPa½", "r0_MPa05": "R0 MPa½", "vm_cm3_mol": "mol. vol. cm³/mol", "bp_C": "boils °C",
    "flash_C": "flash °C", "roles": "used as", "origin": "whose", "category": "kind", "hsp_basis": "HSP from",
    "ins_number": "INS", "ionic_type": "charge", "hlb": "HLB", "hlb_method": "HLB from", "mw_g_mol": "g/mol",
    "kind": "kind", "rhlb_ow": "required HLB", "density_g_cm3": "density g/cm³", "ripening": "ripening",
    "jurisdiction": "law", "use": "used as", "purposes": "for", "food_category": "food", "limit": "limit",
    "unit": "unit", "status": "status", "rule": "rule", "checked_on": "checked on", "id": "id", "label": "label",
    "description": "description", "citation": "citation",
}

_HINT = "/ filter: dH > 10 and bp_C < 120, roles has carrier ... (Enter applies)"


def _cell(value) -> str:
    if value is None:
        return ""
    if isinstance(value, float):
        if math.isnan(value):
            return ""
        return f"{value:g}"
    try:
        import pandas as pd

        if pd.isna(value):
            return ""
    except (TypeError, ValueError):
        pass
    return str(value)


class TablesScreen(BenchScreen):
    """Browse the bundled tables (and the user's own rows, marked as theirs)."""

    MODE = "tables"
    FIELD_LABELS = {"where": "filter"}
    BINDINGS = [
        Binding("slash", "focus_filter", "Filter"),
        Binding("escape", "clear_filter", "Clear filter"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.table_name = "solvents"
        self.frame = None  # the filtered DataFrame shown

    def compose(self) -> ComposeResult:
        yield from self.compose_frame_top()
        with Horizontal(id="tables-body"):
            yield OptionList(*[Option(title, id=name) for name, title in TABLES], id="table-chooser")
            with Vertical(id="tables-main"):
                yield Input(placeholder=_HINT, id="table-filter", compact=True)
                yield Static("", id="table-count", classes="dim-line")
                yield DataTable(id="table-grid", cursor_type="row", zebra_stripes=True)
            with VerticalScroll(id="row-detail-pane"):
                yield CautionBox(id="row-cautions", classes="cautions")
                yield Static("", id="row-detail")
        yield from self.compose_frame_bottom()

    def on_mount(self) -> None:
        self.query_one("#table-chooser", OptionList).highlighted = 0
        self.load_table("solvents")
        self.query_one("#table-grid", DataTable).focus()

    # -- actions
    def action_focus_filter(self) -> None:
        self.query_one("#table-filter", Input).focus()

    def action_clear_filter(self) -> None:
        box = self.query_one("#table-filter", Input)
        if box.value:
            box.value = ""
            self.load_table(self.table_name)

    # -- events
    def on_option_list_option_highlighted(self, event: OptionList.OptionHighlighted) -> None:
        if event.option.id and event.option.id != self.table_name:
            self.query_one("#table-filter", Input).value = ""
            self.load_table(event.option.id)

    def on_input_submitted(self, event: Input.Submitted) -> None:
        if event.input.id == "table-filter":
            self.load_table(self.table_name, event.value)

    def on_data_table_row_highlighted(self, event: DataTable.RowHighlighted) -> None:
        if self.frame is not None and event.cursor_row is not None and 0 <= event.cursor_row < len(self.frame):
            self.show_row(self.frame.iloc[event.cursor_row].to_dict())

    # -- work
    def load_table(self, name: str, condition: str = "") -> None:
        from ..data.query import where

        df = self.guard(self.session.catalog.table, name)
        if df is None:
            return
        full = len(df)
        if condition.strip():
            mask = self.guard(where, df, condition)
            if mask is None:
                return
            df = df[mask]
        self.table_name = name
        self.frame = df.reset_index(drop=True)
        cols = [c for c in GRID_COLUMNS.get(name, list(df.columns)[:8]) if c in df.columns]
        grid_rows = []
        for _, row in self.frame.iterrows():
            cells = []
            for c in cols:
                text = _cell(row[c])
                if c == "origin" and text.startswith("user"):
                    text = "yours"
                cells.append(shorten(text, 48))
            grid_rows.append(cells)
        fill_table(self.query_one("#table-grid", DataTable), [HEADERS.get(c, c.replace("_", " ")) for c in cols],
                   grid_rows, cut=-1)
        shown = f"{len(self.frame)} of {full} rows" if condition.strip() else f"{full} rows"
        self.query_one("#table-count", Static).update(f"{dict(TABLES).get(name, name)}: {shown}")
        if len(self.frame):
            self.show_row(self.frame.iloc[0].to_dict())
        else:
            self.query_one("#row-detail", Static).update("No row matches the filter.")
            self.query_one("#row-cautions", CautionBox).show(())

    def show_row(self, row: dict) -> None:
        cat = self.session.catalog
        t = Text()
        title = row.get("name") or row.get("substance") or row.get("id") or ""
        t.append(f"{title}\n", style="bold")
        if str(row.get("origin", "")).startswith("user"):
            t.append(f"your row ({row['origin'][6:]})\n", style="italic")
        ids: list[str] = []
        for key, value in row.items():
            text = _cell(value)
            t.append(f"{key:<22}", style="dim")
            t.append(f"{text or '-'}\n")
            if key == "source" or key.endswith("_source"):
                ids += [i for i in text.split(";") if i]
        if self.table_name != "sources" and ids:
            t.append("\nSources\n", style="bold")
            for sid in dict.fromkeys(ids):
                try:
                    src = cat.source(sid)
                    t.append(f"[{sid}] ", style="bold")
                    t.append(f"({src.get('kind', '')}) {src.get('citation', '')}")
                    if _cell(src.get("url")):
                        t.append(f" {src['url']}", style="underline")
                    t.append("\n")
                except LookupError:
                    t.append(f"[{sid}] not in sources.csv\n", style="bold red")
        self.query_one("#row-detail", Static).update(t)
        self.query_one("#row-cautions", CautionBox).show(self.row_cautions(row))

    def row_cautions(self, row: dict) -> list[str]:
        from ..rules.cautions import row_cautions

        return self.guard(row_cautions, self.session.catalog, self.table_name, row) or []
