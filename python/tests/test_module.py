"""The Python module against the command line on the (invented) demo plate, and its errors.

Check values: the `vzero` program built from the same tree on the same inputs (the
reference for "the same tables as the CLI"), Python's hashlib for the SHA-256, and the
Michaelis-Menten closed form v = Vmax*S/(Km+S) worked below.
Run by CTest (python_module) with PYTHONPATH=<build>/python, VZERO_EXE, VZERO_SOURCE_DIR.
"""

import csv
import hashlib
import math
import os
import shutil
import subprocess

import numpy as np
import pytest

import vzero

EXE = os.environ["VZERO_EXE"]
SRC = os.environ["VZERO_SOURCE_DIR"]
PLATE = "demo-data/hydrolase_wide.csv"
MAP = "demo-data/hydrolase_map.csv"
METHOD = "demo-data/esterase_method.toml"
FIT_ARGS = dict(x="substrate", inhibitor="inhibitor_uM", model="competitive", group="enzyme_nM", enzyme="enzyme_nM")


def cli(*args):
    return subprocess.run([EXE, *args], cwd=SRC, capture_output=True, text=True)


@pytest.fixture(scope="module")
def cli_run(tmp_path_factory):
    """The demo through the program: rates, summary, traces, then the fit of the README."""
    out = tmp_path_factory.mktemp("cli")
    r = cli("rates", PLATE, "--layout", MAP, "--method", METHOD, "-q", "-o", str(out / "rates.csv"),
            "--summary", str(out / "summary.csv"), "--traces", str(out / "traces.csv"))
    assert r.returncode == 0, r.stderr
    f = cli("fit", str(out / "rates.csv"), "--x", "substrate", "--inhibitor", "inhibitor_uM", "--model",
            "competitive", "--group", "enzyme_nM", "--enzyme", "enzyme_nM", "-q", "-o", str(out / "fit.csv"))
    assert f.returncode == 0, f.stderr
    return out


@pytest.fixture(scope="module")
def module_run(tmp_path_factory):
    here = os.getcwd()
    os.chdir(SRC)  # the same relative input paths as the program was given
    try:
        return vzero.rates_outputs([PLATE], layout=MAP, method=METHOD, traces=True,
                                   output=str(tmp_path_factory.mktemp("module") / "rates.csv"))
    finally:
        os.chdir(here)


def read_text(path):
    with open(path, encoding="utf-8", newline="") as f:
        return f.read()


def same_column(got, cells):
    """Every cell of a CLI column equals the module's value: numbers as doubles (empty = NaN)."""
    got = list(got)
    assert len(got) == len(cells)
    for g, c in zip(got, cells):
        if isinstance(g, (float, np.floating)):
            assert (math.isnan(g) and c == "") or g == float(c), (g, c)
        elif isinstance(g, (bool, np.bool_)):
            assert ("true" if g else "false") == c
        elif isinstance(g, (int, np.integer)):
            assert int(c) == g
        else:
            assert g == c


@pytest.mark.parametrize("table", ["rates", "summary", "traces"])
def test_table_text_is_the_cli_file(cli_run, module_run, table):
    assert module_run["csv"][table] == read_text(cli_run / (table + ".csv"))


@pytest.mark.parametrize("table", ["rates", "summary", "traces"])
def test_every_column_equals_the_cli_file(cli_run, module_run, table):
    with open(cli_run / (table + ".csv"), encoding="utf-8", newline="") as f:
        rows = list(csv.reader(f))
    cols = module_run[table]
    assert [str(c) for c in cols.keys()] == rows[0]
    assert len(rows) > 2
    for i, name in enumerate(rows[0]):
        same_column(cols[name], [r[i] for r in rows[1:]])


def test_numpy_columns_without_pandas(cli_run, monkeypatch):
    monkeypatch.setattr(vzero, "use_pandas", False)
    monkeypatch.chdir(SRC)
    rates = vzero.rates(PLATE, layout=MAP, method=METHOD)
    assert isinstance(rates, dict) and rates["v0"].dtype == np.float64
    with open(cli_run / "rates.csv", encoding="utf-8", newline="") as f:
        rows = list(csv.reader(f))
    same_column(rates["v0"], [r[rows[0].index("v0")] for r in rows[1:]])


def test_options_by_name_with_underscores(tmp_path, monkeypatch):
    # max_conversion=5 is the method file's `max-conversion` / the command line's --max-conversion.
    r = cli("rates", PLATE, "--layout", MAP, "--method", METHOD, "--max-conversion", "5", "--signal-ceiling", "2.5",
            "-q", "-o", str(tmp_path / "rates.csv"))
    assert r.returncode == 0, r.stderr
    monkeypatch.chdir(SRC)
    out = vzero.rates_outputs(PLATE, layout=MAP, method=METHOD, max_conversion=5, signal_ceiling=2.5,
                              summary=False, output=str(tmp_path / "rates.csv"))
    assert out["csv"]["rates"] == read_text(tmp_path / "rates.csv")


def test_fit_of_the_file_is_the_cli_fit(cli_run):
    fit = vzero.fit_outputs(str(cli_run / "rates.csv"), **FIT_ARGS)
    assert fit["csv"]["fit"] == read_text(cli_run / "fit.csv")


def test_fit_of_the_table_in_memory_gives_the_cli_km_vmax(cli_run, module_run):
    out = vzero.fit_outputs(module_run["rates"], **FIT_ARGS)  # units from the DataFrame's attrs
    assert out["csv"]["fit"] == read_text(cli_run / "fit.csv")
    fit = out["fit"]
    with open(cli_run / "fit.csv", encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    want = {(r["enzyme_nM"], r["parameter"]): r["estimate"] for r in rows}
    got = {(str(g), p): e for g, p, e in zip(fit["enzyme_nM"], fit["parameter"], fit["estimate"])}
    assert {"Vmax", "Km"} <= {p for (_, p), e in want.items() if e != ""}
    assert len(got) == len(want)
    for key, text in want.items():  # a group that could not be fitted has an empty estimate
        assert (text == "" and math.isnan(got[key])) or got[key] == float(text), key


def test_fit_recovers_exact_michaelis_menten_points():
    # Closed form: v = Vmax*S/(Km+S) with Vmax = 2, Km = 5 is fitted without residual.
    s = np.array([0.5, 1, 2, 5, 10, 20, 50])
    fit = vzero.fit({"substrate": s, "v0": 2 * s / (5 + s)}, x="substrate", no_profile=True)
    est = dict(zip(fit["parameter"], fit["estimate"]))
    assert est["Vmax"] == pytest.approx(2, rel=1e-9) and est["Km"] == pytest.approx(5, rel=1e-9)


def test_inspect_reads_what_the_cli_shows():
    info = vzero.inspect(os.path.join(SRC, PLATE))
    with open(os.path.join(SRC, PLATE), "rb") as f:
        assert info["sha256"] == hashlib.sha256(f.read()).hexdigest()  # Python's hashlib
    shown = cli("inspect", PLATE).stdout
    assert "shape     %s\n" % info["shape"] in shown and "profile   %s (" % info["profile"] in shown
    ch = info["channels"][0]
    assert len(info["reads"]["value"]) == ch["wells"] * ch["reads"]
    assert "reads   %d, from" % ch["reads"] in shown


def bad_export(tmp_path):
    lines = read_text(os.path.join(SRC, PLATE)).split("\n")
    row = next(i for i, l in enumerate(lines) if l.startswith("40,"))
    cells = lines[row].split(",")
    cells[5] = "0.0x52"  # column 6 (well A4) of the read at 40 s
    lines[row] = ",".join(cells)
    path = tmp_path / "damaged.csv"
    path.write_text("\n".join(lines), encoding="utf-8")
    return path, row + 1


def test_bad_input_raises_with_its_place_and_fix(tmp_path):
    path, line = bad_export(tmp_path)
    shutil.copy(os.path.join(SRC, MAP), tmp_path / "map.csv")
    with pytest.raises(vzero.InputError) as caught:
        vzero.rates([str(path)], layout=str(tmp_path / "map.csv"), method=os.path.join(SRC, METHOD))
    e = caught.value
    assert isinstance(e, ValueError)
    assert (e.file, e.line) == (str(path), line) and e.column > 0 and e.fixes
    assert str(e).startswith("%s:%d:%d: " % (path, line, e.column))
    r = cli("rates", str(path), "--layout", str(tmp_path / "map.csv"), "--method", METHOD, "-q",
            "-o", str(tmp_path / "rates.csv"))
    assert r.returncode == 1 and str(e).split("\n")[0] in r.stderr


def test_bad_method_value_points_at_the_method_file(tmp_path):
    method = tmp_path / "m.toml"
    method.write_text("epsilon = 18000\npath-cm = -0.5\n", encoding="utf-8")
    with pytest.raises(vzero.InputError) as caught:
        vzero.rates([os.path.join(SRC, PLATE)], layout=os.path.join(SRC, MAP), method=str(method))
    assert (caught.value.file, caught.value.line) == (str(method), 2)


def test_unknown_option_is_a_usage_error():
    with pytest.raises(vzero.UsageError, match="max-convertion"):
        vzero.rates([os.path.join(SRC, PLATE)], layout=os.path.join(SRC, MAP), max_convertion=5)


def test_flags_and_dashed_names(tmp_path, monkeypatch):
    # signal_only=True is the flag --signal-only; a dashed key is taken as written.
    r = cli("rates", PLATE, "--layout", MAP, "--signal-only", "--conc-unit", "uM", "-q", "-o", str(tmp_path / "r.csv"))
    assert r.returncode == 0, r.stderr
    monkeypatch.chdir(SRC)
    out = vzero.rates_outputs(PLATE, layout=MAP, signal_only=True, summary=False, **{"conc-unit": "uM"})
    assert out["csv"]["rates"] == read_text(tmp_path / "r.csv")
    assert (out["rates"]["v0_unit"] != "uM/min").all()  # no conversion: signal units per minute


def test_one_thread_gives_the_same_bytes(module_run, monkeypatch):
    monkeypatch.chdir(SRC)
    one = vzero.rates_outputs([PLATE], layout=MAP, method=METHOD, traces=True, threads=1)
    assert one["csv"] == module_run["csv"]
