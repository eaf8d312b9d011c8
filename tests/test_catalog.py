"""The catalog loader: validation messages, forgiving lookup, the user's overlay, the library fallback."""

from __future__ import annotations

import csv
import shutil

import pytest

from solvsel.data.catalog import TABLES_DIR, Catalog, check_cas, load_catalog, normalize_name
from solvsel.errors import InputError, TableError, UnknownNameError


@pytest.fixture
def tdir(tmp_path):
    """A data folder with the real schema and sources and a three-row solvents table."""
    d = tmp_path / "tables"
    d.mkdir()
    shutil.copy(TABLES_DIR / "schema.csv", d)
    shutil.copy(TABLES_DIR / "sources.csv", d)
    rows = list(csv.DictReader((TABLES_DIR / "solvents.csv").open(encoding="utf-8")))[:3]
    write(d / "solvents.csv", rows)
    return d


def write(path, rows):
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.DictWriter(fh, fieldnames=list(rows[0]), lineterminator="\n")
        w.writeheader()
        w.writerows(rows)


def rows_of(d):
    return list(csv.DictReader((d / "solvents.csv").open(encoding="utf-8")))


def load_error(d) -> TableError:
    with pytest.raises(TableError) as exc:
        Catalog(d).table("solvents")
    return exc.value


def test_good_folder_loads(tdir):
    assert len(Catalog(tdir).solvents) == 3


def test_missing_column_names_file_and_column(tdir):
    rows = rows_of(tdir)
    for r in rows:
        del r["dP_MPa05"]
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert "solvents.csv" in str(e) and e.row == 1 and e.column == "dP_MPa05"
    assert "missing column" in str(e)


def test_non_numeric_value_names_row_and_column(tdir):
    rows = rows_of(tdir)
    rows[1]["dH_MPa05"] = "twelve"
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert (e.row, e.column) == (3, "dH_MPa05")  # header is row 1
    assert "not a number" in str(e) and "solvents.csv, row 3, column 'dH_MPa05'" in str(e)


def test_out_of_range_value(tdir):
    rows = rows_of(tdir)
    rows[0]["dD_MPa05"] = "40"
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert (e.row, e.column) == (2, "dD_MPa05") and "out of range" in str(e) and "10 <= dD_MPa05 <= 25" in str(e)


def test_duplicate_cas(tdir):
    rows = rows_of(tdir)
    rows[2]["cas"] = rows[0]["cas"]
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert (e.row, e.column) == (4, "cas") and "duplicate" in str(e) and "row 2" in str(e)


def test_bad_cas_check_digit(tdir):
    rows = rows_of(tdir)
    rows[0]["cas"] = "64-17-6"
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert (e.row, e.column) == (2, "cas") and "check digit" in str(e)


def test_unknown_source_id(tdir):
    rows = rows_of(tdir)
    rows[1]["hsp_source"] = "hsp_mr2022;nobody_2099"
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert (e.row, e.column) == (3, "hsp_source") and "nobody_2099" in str(e)


def test_bad_choice(tdir):
    rows = rows_of(tdir)
    rows[0]["water_miscibility"] = "some"
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert (e.row, e.column) == (2, "water_miscibility") and "full, partial, none" in str(e)


def test_stray_whitespace(tdir):
    rows = rows_of(tdir)
    rows[0]["name"] = "ethanol "
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert (e.row, e.column) == (2, "name") and "spaces" in str(e)


def test_unknown_column_and_wrong_field_count(tdir):
    rows = rows_of(tdir)
    for r in rows:
        r["colour"] = "clear"
    write(tdir / "solvents.csv", rows)
    e = load_error(tdir)
    assert e.column == "colour" and "unknown column" in str(e)
    text = (TABLES_DIR / "solvents.csv").read_text(encoding="utf-8").splitlines()
    (tdir / "solvents.csv").write_text(text[0] + "\n" + text[1] + ",extra\n", encoding="utf-8")
    e = load_error(tdir)
    assert e.row == 2 and "fields" in str(e)


def test_bad_source_kind(tdir):
    with (tdir / "sources.csv").open("a", encoding="utf-8") as fh:
        fh.write("made_up,rumour,Somebody said so,\n")
    with pytest.raises(TableError) as exc:
        Catalog(tdir).sources
    assert "kind" in str(exc.value) and exc.value.column == "kind"


# ---------------------------------------------------------------- lookup


def test_forgiving_lookup():
    cat = load_catalog()
    assert cat.solvent("PG").name == "propylene glycol"
    assert cat.solvent("  Propylene   GLYCOL").cas == "57-55-6"
    assert cat.solvent("57-55-6").name == "propylene glycol"
    assert cat.solvent("hexane").name == "n-hexane"
    assert cat.solvent("Triacetin").cas == "102-76-1"
    assert cat.solute("CBD").name == "cannabidiol"


def test_unknown_name_suggests_closest():
    cat = load_catalog()
    with pytest.raises(UnknownNameError) as exc:
        cat.solvent("propylen glycol", library=False)
    assert exc.value.suggestions[0] == "propylene glycol"
    assert isinstance(exc.value, KeyError)


def test_synonyms_do_not_shadow_names():
    cat = load_catalog()
    seen = {}
    for s in cat.solvent_records():
        for n in (s.name,) + s.synonyms:
            seen.setdefault(normalize_name(n), []).append(s.name)
    clashes = {k: v for k, v in seen.items() if len(set(v)) > 1}
    assert not clashes, clashes


def test_cas_checker():
    # check digits of well-known CAS numbers (CAS registry rules)
    assert all(check_cas(c) for c in ("7732-18-5", "64-17-5", "57-55-6", "5989-27-5"))
    assert not check_cas("7732-18-4") and not check_cas("abc")


def test_user_overlay_adds_and_overrides(tmp_path):
    rows = list(csv.DictReader((TABLES_DIR / "solvents.csv").open(encoding="utf-8")))
    mine = [dict(rows[0]), dict(rows[0])]
    mine[0]["dD_MPa05"] = "16.0"  # my own measurement of ethanol
    mine[0]["hsp_source"] = "my lab notebook p. 12"
    mine[1].update(name="house solvent A", cas="", synonyms="", hsp_source="own")
    path = tmp_path / "mine.csv"
    write(path, mine)
    cat = load_catalog(own={"solvents": [path]})
    eth = cat.solvent("ethanol")
    assert eth.dD == 16.0 and eth.is_user and str(path) in eth.origin
    assert cat.solvent("house solvent A").is_user
    assert len(cat.solvents) == len(rows) + 1
    # the bundled catalog is untouched
    assert load_catalog().solvent("ethanol").dD == 15.8


def test_user_overlay_errors_name_their_file(tmp_path):
    rows = list(csv.DictReader((TABLES_DIR / "solvents.csv").open(encoding="utf-8")))[:1]
    rows[0]["dD_MPa05"] = "abc"
    path = tmp_path / "mine.csv"
    write(path, rows)
    with pytest.raises(TableError) as exc:
        load_catalog(own={"solvents": [path]}).solvents
    assert str(path) in str(exc.value) and exc.value.row == 2
    with pytest.raises(InputError):
        load_catalog(own={"solvents": [tmp_path / "nope.csv"]}).solvents


def test_library_fallback_names_its_dataset():
    """A liquid outside the table comes from chemicals with the data set's citation
    (naphthalene: 19.2, 2.0, 5.9 in MANUEL_RUBEN_2022 and in Hansen 2007)."""
    cat = load_catalog()
    s = cat.solvent("naphthalene")
    assert s.origin.startswith("library: chemicals") and "hsp_mr2022" in s.origin
    assert (s.dD, s.dP, s.dH) == (19.2, 2.0, 5.9)
    assert "Diaz de los Rios" in cat.source(s.hsp_source)["citation"]
    with pytest.raises(UnknownNameError):
        cat.solvent("no such liquid at all", library=True)


def test_library_name_resolving_to_our_cas_gives_our_row():
    """A name only the reference library knows (here 'vanilin', which chemicals resolves to
    121-33-5) returns the table's own row, with its fusion data, not a bare library record."""
    cat = load_catalog()
    v = cat.solute("vanilin")
    assert v.origin == "bundled" and v.name == "vanillin" and v.dHfus_kJ_mol is not None
