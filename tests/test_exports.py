"""Exports of a result: CSV, XLSX, JSON and pandas read back and compared with the result.

Every number written is read back and compared with the `Solution` it came
from, converted to the unit its header names (`balance.quantities.convert`).
The three-effect skim-milk demo also gives a hand-calculable check: its feed
and product are specified in the file (20 t/h at 9 % solids to 45 %), so the
exported product flow and water evaporated follow from the solids balance
alone, without the solver.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import pytest

from balance.analysis.key_figures import key_figures
from balance.cli import main
from balance.errors import InputError
from balance.flowsheet.file_format import load
from balance.quantities import convert, display_unit
from balance.report import exports
from balance.solve import solve

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "flowsheets" / "skim_milk_3_effect_forward.toml"

#: CSV and JSON carry floats by repr, so numbers come back bit for bit; XLSX
#: stores IEEE doubles too. A relative 1e-12 allows for nothing but the
#: unit conversion done once on each side.
RTOL = 1e-12


@pytest.fixture(scope="module")
def solution():
    return solve(load(DEMO)).raise_if_failed()


def _close(a, b, rtol=RTOL):
    if a is None or b is None:
        return a is None and b is None
    return math.isclose(float(a), float(b), rel_tol=rtol, abs_tol=1e-12)


def _expected_stream_value(solution, stream, column, si):
    s = solution.streams[stream]
    value = s.values.get(column.name, getattr(s, column.name, None))
    if value is None:
        return None
    return value if si or column.kind == "ratio" else convert(value, column.kind)


def _check_stream_records(solution, table_columns, records, si):
    """Every number of every stream equals the solution's, in the header's unit."""
    by_name = {c.name: c for c in table_columns}
    assert {r["stream"] for r in records} == set(solution.streams)
    for record in records:
        for name, value in record.items():
            column = by_name[name]
            if column.kind is None:
                continue
            expected = _expected_stream_value(solution, record["stream"], column, si)
            assert _close(value, expected), (record["stream"], name, value, expected)


def test_headers_carry_units(solution):
    table = exports.stream_table(solution)
    headers = table.headers
    assert "flow [kg/h]" in headers and "temperature [°C]" in headers and "pressure [kPa]" in headers
    si = exports.stream_table(solution, si=True).headers
    assert "flow [kg/s]" in si and "temperature [K]" in si and "pressure [Pa]" in si and "solids [-]" in si
    units = exports.unit_table(solution).headers
    assert "area [m2]" in units and "duty [kW]" in units and units[-1] == "fixed"


def test_hand_balance_of_the_demo(solution):
    # The file fixes feed 20 t/h at 9 % solids and a 45 % product: the solids balance gives
    # product = 20 000 x 0.09 / 0.45 = 4 000 kg/h and water evaporated 16 000 kg/h (hand calculation).
    figures = {r["name"]: r for r in exports.key_figure_table(solution).records()}
    assert figures["feed_flow"]["value"] == pytest.approx(20000.0, rel=1e-12)
    assert figures["feed_flow"]["unit"] == "kg/h"
    assert figures["product_flow"]["value"] == pytest.approx(4000.0, rel=1e-9)
    assert figures["water_evaporated"]["value"] == pytest.approx(16000.0, rel=1e-9)
    assert figures["product_solids"]["value"] == pytest.approx(45.0, rel=1e-9)
    assert figures["product_solids"]["unit"] == "%"


@pytest.mark.parametrize("si", [False, True])
def test_csv_read_back(solution, tmp_path, si):
    paths = exports.write_csv(solution, tmp_path / "tables", si=si)
    assert sorted(p.name for p in paths) == sorted(exports.TABLE_FILES.values())
    columns = exports.stream_table(solution, si=si).columns
    with open(tmp_path / "tables" / "streams.csv", newline="", encoding="utf-8") as handle:
        rows = list(csv.reader(handle))
    assert rows[0] == [c.header for c in columns]
    records = [{c.name: (None if cell == "" else float(cell) if c.kind else cell)
                for c, cell in zip(columns, row)} for row in rows[1:]]
    _check_stream_records(solution, columns, records, si)

    unit_columns = exports.unit_table(solution, si=si).columns
    with open(tmp_path / "tables" / "units.csv", newline="", encoding="utf-8") as handle:
        unit_rows = list(csv.DictReader(handle))
    for row in unit_rows:
        unit = solution.units[row["unit"]]
        for column in unit_columns:
            if column.kind is None or row[column.header] == "":
                continue
            value = unit.quantities.get(column.name, unit.figures.get(column.name))
            expected = value if si or column.kind == "ratio" else convert(value, column.kind)
            assert _close(float(row[column.header]), expected), (row["unit"], column.name)
        assert set(filter(None, row["fixed"].split("; "))) == unit.fixed

    with open(tmp_path / "tables" / "key_figures.csv", newline="", encoding="utf-8") as handle:
        figure_rows = {r["name"]: r for r in csv.DictReader(handle)}
    for fig in key_figures(solution).values():
        row = figure_rows[fig.name]
        if not math.isfinite(fig.value):
            assert row["value"] == ""
            continue
        expected = fig.value if si or fig.kind == "ratio" else convert(fig.value, fig.kind)
        assert _close(float(row["value"]), expected), fig.name
        if not si and fig.kind != "ratio":
            assert row["unit"] == display_unit(fig.kind)


def test_json_read_back(solution, tmp_path):
    path = exports.write_json(solution, tmp_path / "tables.json")
    data = json.loads(path.read_text(encoding="utf-8"))
    assert data["layout"] == exports.JSON_LAYOUT
    assert data["converged"] is True and data["status"] == "converged"
    streams = data["tables"]["streams"]
    columns = exports.stream_table(solution).columns
    assert [c["header"] for c in streams["columns"]] == [c.header for c in columns]
    _check_stream_records(solution, columns, streams["rows"], si=False)
    units = {r["unit"]: r for r in data["tables"]["units"]["rows"]}
    assert units["E1"]["area"] == pytest.approx(solution.units["E1"].quantities["area"], rel=RTOL)
    # a stream without a pressure variable has null, never a made-up number
    assert next(r for r in streams["rows"] if r["stream"] == "feed")["pressure"] is None


def test_xlsx_read_back(solution, tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    path = exports.write_xlsx(solution, tmp_path / "tables.xlsx")
    book = openpyxl.load_workbook(path, read_only=True)
    assert book.sheetnames == ["about", "streams", "units", "key figures"]
    about = {row[0]: row[1] for row in book["about"].iter_rows(values_only=True)}
    assert about["status"] == "converged" and about["converged"] == "yes"
    rows = list(book["streams"].iter_rows(values_only=True))
    columns = exports.stream_table(solution).columns
    assert list(rows[0]) == [c.header for c in columns]
    records = [dict(zip((c.name for c in columns), row)) for row in rows[1:]]
    _check_stream_records(solution, columns, records, si=False)
    figures = {row[0]: row for row in list(book["key figures"].iter_rows(values_only=True))[1:]}
    assert figures["water_evaporated"][2] == pytest.approx(16000.0, rel=1e-9)   # hand balance, see above
    assert figures["water_evaporated"][3] == "kg/h"


def test_dataframes(solution):
    pytest.importorskip("pandas")
    frames = exports.to_frames(solution)
    assert set(frames) == {"streams", "units", "key_figures"}
    streams = frames["streams"]
    assert list(streams.index) == list(solution.streams)
    assert streams.loc["V3", "temperature [°C]"] == pytest.approx(
        convert(solution.streams["V3"].values["temperature"], "temperature"), rel=RTOL)
    assert streams.attrs["units"]["flow [kg/h]"] == "kg/h"
    assert frames["units"].loc["E2", "area [m2]"] == pytest.approx(solution.units["E2"].quantities["area"])


def test_nothing_is_overwritten(solution, tmp_path):
    folder = tmp_path / "tables"
    folder.mkdir()
    (folder / "units.csv").write_text("mine\n", encoding="utf-8")
    with pytest.raises(InputError, match="exists already"):
        exports.write_csv(solution, folder)
    # checked before writing: the other two files were not written either
    assert sorted(p.name for p in folder.iterdir()) == ["units.csv"]
    assert (folder / "units.csv").read_text(encoding="utf-8") == "mine\n"
    exports.write_csv(solution, folder, overwrite=True)
    assert (folder / "units.csv").read_text(encoding="utf-8").startswith("unit,type")
    target = tmp_path / "t.json"
    target.write_text("{}", encoding="utf-8")
    with pytest.raises(InputError, match="exists already"):
        exports.write_json(solution, target)
    assert target.read_text(encoding="utf-8") == "{}"


def test_export_command(tmp_path, capsys):
    csv_dir, js = tmp_path / "csv", tmp_path / "t.json"
    assert main(["export", str(DEMO), "--csv", str(csv_dir), "--json", str(js)]) == 0
    assert (csv_dir / "streams.csv").is_file() and js.is_file()
    before = js.read_text(encoding="utf-8")
    # a second run refuses before solving and leaves the files as they were
    assert main(["export", str(DEMO), "--json", str(js)]) == 2
    assert "exists already" in capsys.readouterr().err
    assert js.read_text(encoding="utf-8") == before
    assert main(["export", str(DEMO), "--json", str(js), "--si", "--overwrite"]) == 0
    assert json.loads(js.read_text(encoding="utf-8"))["units_of_measure"] == "SI"
    assert main(["export", str(DEMO)]) == 2
    assert "--csv DIR" in capsys.readouterr().err


def test_export_command_xlsx(tmp_path):
    pytest.importorskip("openpyxl")
    target = tmp_path / "t.xlsx"
    assert main(["export", str(DEMO), "--xlsx", str(target)]) == 0
    assert target.stat().st_size > 1000
