"""CSV text from the library <-> columns (a dict of numpy arrays or a pandas DataFrame).

The library writes every table with one writer (numbers as the shortest text that reads back
to the same double, NaN as an empty cell); float() reads that text back to the same double,
and repr() of a float is again such a text, so numbers survive both ways unchanged.
"""

import csv
import io
import math

import numpy as np

try:
    import pandas
except ImportError:  # the columns stay a dict of numpy arrays
    pandas = None


def _is_int(cell):
    return cell != "" and (cell.isdigit() or (cell[0] in "+-" and cell[1:].isdigit()))


def _number(cell):
    return float(cell) if cell != "" else math.nan


def _column(cells, kind):
    """One column as a numpy array: by its Table Schema type when known, else inferred."""
    if kind == "string":
        return np.array(cells, dtype=object)
    if kind == "boolean" and all(c in ("true", "false") for c in cells):
        return np.array([c == "true" for c in cells], dtype=bool)
    if kind in (None, "integer") and cells and all(_is_int(c) for c in cells):
        return np.array([int(c) for c in cells], dtype=np.int64)
    if kind in ("number", "integer") or (kind is None and any(c != "" for c in cells)):
        try:
            return np.array([_number(c) for c in cells], dtype=np.float64)
        except ValueError:
            pass
    return np.array(cells, dtype=object)


def parse_csv(text, types=None, as_frame=True, units=None):
    """Columns of a CSV text (bytes or str); `types` maps a column to its Table Schema type."""
    if isinstance(text, bytes):
        text = text.decode("utf-8")
    rows = list(csv.reader(io.StringIO(text, newline="")))
    if not rows:
        return {}
    header, body = rows[0], rows[1:]
    types = types or {}
    cols = {name: _column([r[i] for r in body], types.get(name)) for i, name in enumerate(header)}
    if as_frame and pandas is not None:
        frame = pandas.DataFrame(cols)
        frame.attrs["units"] = dict(units or {})
        return frame
    return cols


def _cell(value):
    if value is None:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    if isinstance(value, (float, np.floating)):
        return "" if math.isnan(value) else repr(float(value))
    return str(value)


def to_csv(table):
    """CSV text of a DataFrame or a dict of columns (the way the library writes numbers)."""
    if pandas is not None and isinstance(table, pandas.DataFrame):
        names = [str(c) for c in table.columns]
        columns = [table[c].tolist() for c in table.columns]
    elif isinstance(table, dict):
        names = [str(c) for c in table]
        columns = [list(v) for v in table.values()]
    else:
        raise TypeError("expected a path, a pandas DataFrame or a dict of columns; found %s"
                        % type(table).__name__)
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(names)
    for row in zip(*columns):
        writer.writerow([_cell(v) for v in row])
    return out.getvalue()


def schema_of(datapackage, resource):
    """(types, units) of a resource's fields in a datapackage.json document (dict)."""
    for r in datapackage.get("resources", []):
        if r.get("name") == resource:
            fields = r.get("schema", {}).get("fields", [])
            types = {f["name"]: f.get("type") for f in fields if "name" in f}
            units = {f["name"]: f["unit"] for f in fields if "name" in f and isinstance(f.get("unit"), str)}
            return types, units
    return {}, {}
