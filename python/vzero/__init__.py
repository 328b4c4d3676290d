"""vzero from Python: the library's own entry points, tables as columns.

    import vzero
    rates = vzero.rates(["plate.csv"], layout="map.csv", method="assay.toml")
    fit = vzero.fit(rates, x="substrate", model="mm")

Tables are pandas DataFrames when pandas is installed (set vzero.use_pandas = False for a
dict of numpy arrays). Options take the names of the method file and of the command line's
long options (underscores for dashes: max_conversion=10). Bad input raises vzero.InputError
(a ValueError with file, line, column, message, fixes); a bad option vzero.UsageError.
Nothing is written to disk. See docs/python.md.
"""

import json
import os
import tempfile

from . import _tables, _vzero
from .errors import InputError, UsageError

__all__ = ["inspect", "rates", "rates_outputs", "fit", "fit_outputs", "InputError", "UsageError"]

use_pandas = _tables.pandas is not None

_KINDS = dict(_vzero.option_kinds())
_NOT_HERE = {"report": "the module writes no report; run `vzero report` on a folder written by `vzero rates`"}


def _option_text(name, value):
    """The text the command line would be given for `value`; None when a flag is off."""
    if _KINDS.get(name) == "flag" and isinstance(value, bool):
        return "true" if value else None
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return repr(value)
    if isinstance(value, (list, tuple)):
        return ",".join(str(v) for v in value)
    return os.fspath(value) if isinstance(value, os.PathLike) else str(value)


def _given(options):
    given = []
    for key, value in options.items():
        name = key.replace("_", "-")
        if name in _NOT_HERE:
            raise UsageError("%s: %s" % (key, _NOT_HERE[name]))
        text = None if value is None else _option_text(name, value)
        if text is not None:
            given.append((name, text))
    return given


def _paths(paths):
    if isinstance(paths, (str, bytes, os.PathLike)):
        paths = [paths]
    return [os.fspath(p) for p in paths]


def rates_outputs(paths, layout=None, method=None, traces=False, summary=True, **options):
    """`vzero rates` on the exports `paths`: every table of the run, nothing written.

    Returns a dict: "rates", "summary" (unless summary=False), "traces" (when traces=True)
    as tables; "csv" with each table's text exactly as the command line writes the file;
    "datapackage" (the datapackage.json document, parsed); "notes"; "warnings".
    `output` names the rates table in datapackage.json (default: rates.csv in the
    temporary folder; the other tables go beside it).
    """
    output = os.fspath(options.pop("output", os.path.join(tempfile.gettempdir(), "rates.csv")))
    folder = os.path.dirname(output)
    for key in ("traces", "summary"):
        if key in options:
            raise UsageError("%s: pass %s=True; the module names the table itself" % (key, key))
    named = {"layout": layout, "method": method, "output": output}
    if traces:
        named["traces"] = os.path.join(folder, "traces.csv")
    if summary:
        named["summary"] = os.path.join(folder, "summary.csv")
    named.update(options)
    raw = _vzero.rates_text(_paths(paths), _given(named))
    package = json.loads(raw["datapackage"])
    out = {"csv": {}, "datapackage": package, "notes": raw["notes"], "warnings": raw["warnings"]}
    for name, text in raw["tables"].items():
        types, units = _tables.schema_of(package, name)
        out[name] = _tables.parse_csv(text, types, use_pandas, units)
        out["csv"][name] = text.decode("utf-8")
    return out


def rates(paths, layout=None, method=None, **options):
    """The rates table of `vzero rates` (one row per well), as columns."""
    return rates_outputs(paths, layout=layout, method=method, summary=False, **options)["rates"]


def _package_units(path):
    """Units the datapackage.json beside `path` gives its columns (as `vzero fit` reads them)."""
    folder = os.path.dirname(os.path.abspath(path))
    try:
        with open(os.path.join(folder, "datapackage.json"), encoding="utf-8") as f:
            package = json.load(f)
    except (OSError, ValueError):
        return {}
    for r in package.get("resources", []) if isinstance(package, dict) else []:
        where = os.path.join(folder, str(r.get("path", "")))
        if os.path.exists(where) and os.path.samefile(where, path):
            fields = r.get("schema", {}).get("fields", [])
            return {f["name"]: f["unit"] for f in fields if isinstance(f.get("unit"), str) and "name" in f}
    return {}


def _fit_options(x, model, options):
    kw = {k.replace("-", "_"): v for k, v in options.items() if v is not None}
    if kw.pop("no_profile", False):
        kw["profile"] = False
    kw["x"] = x
    kw["model"] = [m.strip() for m in model.split(",")] if isinstance(model, str) else list(model)
    if isinstance(kw.get("group"), str):
        kw["group"] = [g.strip() for g in kw["group"].split(",")]
    if isinstance(kw.get("start"), str):
        kw["start"] = [float(s) for s in kw["start"].split(",")]
    return kw


def fit_outputs(table, x, model="mm", units=None, **options):
    """`vzero fit` on a table: a path to a CSV (as the command line reads it, units from the
    datapackage.json beside it), or a DataFrame / dict of columns (units from `units`, or
    the DataFrame's attrs["units"], which vzero.rates sets).

    Options as the command line's (y, group, inhibitor, enzyme, kcat_per_min, weight, sd,
    include_flagged, role, start, confidence, max_iterations, no_profile). Returns a dict: "fit" (the tidy
    fit table), "diagnostics" (the linearised-plot table), "csv" (their text, as written by
    `vzero fit -o` / `--diagnostics`), "json" (the --json document, parsed), "notes".
    """
    kw = _fit_options(x, model, options)
    if isinstance(table, (str, os.PathLike)):
        path = os.fspath(table)
        kw["units"] = dict(_package_units(path), **(units or {}))
        raw = _vzero.fit_text(path, "", "", kw)
    else:
        given = dict(getattr(table, "attrs", {}).get("units", {}))
        given.update(units or {})
        kw["units"] = given
        raw = _vzero.fit_text("", "the table given to vzero.fit", _tables.to_csv(table), kw)
    out = {"csv": {}, "json": json.loads(raw["json"]), "notes": raw["notes"]}
    for name in ("fit", "diagnostics"):
        out[name] = _tables.parse_csv(raw[name], None, use_pandas)
        out["csv"][name] = raw[name].decode("utf-8")
    return out


def fit(table, x, model="mm", **options):
    """The tidy fit table of `vzero fit` (one row per group x model x parameter)."""
    return fit_outputs(table, x, model, **options)["fit"]


def inspect(path, profile=None, sheet=None, time_unit=None):
    """What `vzero inspect` shows, as data, with every read as a table under "reads"
    (channel, well, read, time_s, temperature_c, value, status; value NaN where the status
    is not ok)."""
    info = _vzero.inspect(os.fspath(path), profile or "", sheet or "", time_unit or "")
    reads = {k: v if hasattr(v, "dtype") else _tables.np.array(v, dtype=object) for k, v in info["reads"].items()}
    info["reads"] = _tables.pandas.DataFrame(reads) if use_pandas else reads
    return info
