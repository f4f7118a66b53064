"""Reading text tables as scientists publish them: CSV or whitespace, with or without a header.

A table is CSV (comma-separated) or whitespace-separated text; lines
starting with ``#`` are comments. With a header line the config names
columns by their header names; without one (``header: false``) by their
1-based position. ``select`` keeps the rows whose column equals a value,
so one file holding several instruments feeds one dataset per instrument.
Text columns with a few distinct values (an instrument column, typically)
are counted, so the caller can warn when no ``select`` picks one of them.
"""

import dataclasses

import numpy as np

from planetfit.core.errors import DATA_FILE_MISSING_FIX, InputError, reading
from planetfit.inputs.files import MAX_TABLE_MB, check_readable, excerpt, excerpts

#: A text column with this many distinct values or fewer (and at least two) looks like a label column.
MAX_LABEL_VALUES = 12


@dataclasses.dataclass
class Table:
    """The columns a dataset asked for, and what the rest of the file holds.

    Attributes
    ----------
    columns : dict
        Our name -> float array of the kept rows (NaN kept; the caller decides).
    label_columns : dict
        The file's column name (or number) -> {value: row count} for text columns
        with 2 to :data:`MAX_LABEL_VALUES` distinct values, counted over all rows.
    rows_read, rows_kept : int
        Data rows in the file, and those ``select`` kept.
    """

    columns: dict
    label_columns: dict
    rows_read: int
    rows_kept: int


def _split(line, sep):
    return [c.strip().strip('"').strip("'").strip() for c in (line.split(",") if sep == "," else line.split())]


def _is_number(text):
    try:
        float(text)
    except ValueError:
        return False
    return True


def _column_index(path, names, column, key, line, header):
    """0-based index of the file column a config names (a header name, or a 1-based number) at config ``key``."""
    if not header:
        if not 1 <= column <= len(names):
            raise InputError(
                f"column {column} does not exist; the rows have {len(names)} fields.",
                file=path,
                line=line,
                key=key,
                fix=f"number the columns from 1 to {len(names)} (1 = the first field of a row).",
            )
        return column - 1
    if column not in names and len(names) == 1:
        raise InputError(
            "the first line is a single field (no commas or spaces between columns): this is not a table with a "
            f"header naming '{excerpt(column)}'.",
            file=path,
            line=line,
            key=key,
            fix="name a CSV or whitespace-separated table whose first line names its columns.",
        )
    if column not in names:
        raise InputError(
            f"no column named '{excerpt(column)}'; the header has: {excerpts(names)}.",
            file=path,
            line=line,
            key=key,
            fix=f"set '{key}' to one of those names in the config.",
        )
    return names.index(column)


def _data_rows(path, max_mb, key_prefix):
    lift = f"set '{key_prefix}max_file_mb' above the file's size to read it, or give a smaller file."
    check_readable(path, "data file", max_mb, key=f"{key_prefix}file" if key_prefix else None, lift=lift)
    with reading(path, "data file", DATA_FILE_MISSING_FIX, "give a readable CSV or whitespace-separated text file."):
        text = path.read_text(encoding="utf-8-sig")
    rows = [(n + 1, ln) for n, ln in enumerate(text.splitlines()) if ln.strip() and not ln.lstrip().startswith("#")]
    if not rows:
        raise InputError("the file is empty.", file=path, fix="give a table with data rows.")
    return rows


def _header(path, rows, header):
    """(column names or None, separator, data rows) after checking the first line fits ``header``."""
    first_line, first = rows[0]
    sep = "," if "," in first else None
    cells = _split(first, sep)
    if header and all(_is_number(c) for c in cells):
        raise InputError(
            "the first line holds numbers, not column names.",
            file=path,
            line=first_line,
            fix="set 'header: false' for this dataset and give columns by number, e.g. "
            "'columns: {time: 1, rv: 2, error: 3}'.",
        )
    if not header:
        if not any(_is_number(c) for c in cells):
            raise InputError(
                f"'header: false' is set, but the first line looks like column names ({excerpt(first.strip())}).",
                file=path,
                line=first_line,
                fix="remove 'header: false' and name the columns by the header's names.",
            )
        return [str(i + 1) for i in range(len(cells))], sep, rows
    if len(rows) < 2:
        raise InputError(
            "the table has a header but no data rows.",
            file=path,
            line=first_line,
            fix="add data rows below the header.",
        )
    return cells, sep, rows[1:]


def _matches(cell, value):
    """Whether a cell equals a select value: numbers compared as numbers, text after stripping."""
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return _is_number(cell) and float(cell) == float(value)
    return cell == str(value).strip()


def _label_census(names, cells_by_row):
    """{column: {value: count}} for text columns with a few distinct values."""
    out = {}
    for j, name in enumerate(names):
        values = [cells[j] for cells in cells_by_row]
        if any(_is_number(v) for v in values):
            continue
        distinct = {}
        for v in values:
            distinct[v] = distinct.get(v, 0) + 1
        if 2 <= len(distinct) <= MAX_LABEL_VALUES:
            out[name] = dict(sorted(distinct.items()))
    return out


def _rows_of(path, data, names, sep, header):
    """The cells of every data row, checked to have as many fields as the header (or first row)."""
    out = []
    for lineno, line in data:
        cells = _split(line, sep)
        if len(cells) != len(names):
            raise InputError(
                f"the row has {len(cells)} fields but the {'header' if header else 'first row'} has {len(names)}.",
                file=path,
                line=lineno,
                fix="make every row have the same fields.",
            )
        out.append((lineno, cells))
    return out


def _check_selected(path, chosen, cells_by_row, names, census, key_prefix):
    """Raise if a ``select`` value matches no row, listing the values its column holds."""
    for c, (j, v) in chosen.items():
        if any(_matches(cells[j], v) for cells in cells_by_row):
            continue
        present = census.get(names[j])
        holds = (
            ", ".join(f"{excerpt(k)} ({n} rows)" for k, n in present.items())
            if present
            else excerpts(sorted({cells[j] for cells in cells_by_row})[:MAX_LABEL_VALUES])
        )
        raise InputError(
            f"no row has '{excerpt(v)}' in column '{excerpt(c)}'; the column holds: {holds}.",
            file=path,
            key=f"{key_prefix}select.{c}",
            fix="give one of those values (text is compared exactly, after removing surrounding spaces and quotes).",
        )


def _numbers(path, kept, index, columns, selected):
    """Our name -> float array of the kept rows' columns."""
    out = {ours: np.empty(len(kept)) for ours in columns}
    for r, (lineno, cells) in enumerate(kept):
        for ours, j in index.items():
            try:
                out[ours][r] = float(cells[j])
            except ValueError:
                raise InputError(
                    f"'{excerpt(cells[j])}' in column '{excerpt(columns[ours])}' is not a number.",
                    file=path,
                    line=lineno,
                    fix="remove or correct the row (write NaN for a missing value)"
                    + ("" if selected else ", or keep only some rows with 'select'")
                    + ".",
                ) from None
    return out


def read_table(path, columns, header=True, select=None, key_prefix="", keys=None, max_mb=MAX_TABLE_MB):
    """Read the named columns of a CSV or whitespace text table.

    Parameters
    ----------
    path : Path
    columns : dict
        Our name -> the file's column (header name, or 1-based number when ``header`` is False).
    header : bool
        Whether the first non-comment line names the columns.
    select : dict, optional
        Column -> value: keep only the rows whose column equals the value.
    key_prefix : str
        The dataset's config key (``velocities[0].``), put before the keys messages name.
    keys : dict, optional
        Our name -> the config key naming its column, where that is not ``columns.<our name>``.
    max_mb : float
        Largest file read (:func:`planetfit.inputs.files.check_readable`).

    Returns
    -------
    Table
    """
    rows = _data_rows(path, max_mb, key_prefix)
    names, sep, data = _header(path, rows, header)
    head = rows[0][0]
    keys = {o: f"{key_prefix}{(keys or {}).get(o, f'columns.{o}')}" for o in columns}
    index = {o: _column_index(path, names, c, keys[o], head, header) for o, c in columns.items()}
    chosen = {
        str(c): (_column_index(path, names, c, f"{key_prefix}select.{c}", head, header), v)
        for c, v in (select or {}).items()
    }
    numbered = _rows_of(path, data, names, sep, header)
    cells_by_row = [cells for _, cells in numbered]
    census = _label_census(names, cells_by_row)
    _check_selected(path, chosen, cells_by_row, names, census, key_prefix)
    kept = [(n, cells) for n, cells in numbered if all(_matches(cells[j], v) for j, v in chosen.values())]
    out = _numbers(path, kept, index, columns, bool(select))
    return Table(columns=out, label_columns=census, rows_read=len(data), rows_kept=len(kept))
