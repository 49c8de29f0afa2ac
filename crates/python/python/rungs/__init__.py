"""Rungs from Python: vibrational levels of diatomic molecules.

Read a table of vibrational levels, spacings or band positions, see how it was read, and
analyse it: vibrational constants with uncertainties, and the dissociation limit D0 by every
method (observed sum, linear and curved Birge-Sponer, LeRoy-Bernstein near-dissociation fits,
the near-dissociation expansion) with a recommended value, its statistical and model
uncertainty and an interval.

Every dissociation limit is a model-dependent estimate: each method assumes how the levels
continue beyond the data, and different defensible assumptions give different answers. Check
the result against independent thermochemistry or a convergence limit before relying on it.

The numbers are those of the Rungs page and the ``rungs`` command line: the same compiled
core does the work, and ``analyze(...).to_dict()`` is the document that
``rungs analyze FILE --format json`` prints.

    >>> import rungs
    >>> data = rungs.read("levels.csv")            # a file, a text, a DataFrame or arrays
    >>> data.rows[0].status, data.usable
    >>> result = rungs.analyze(data, mc_samples=2000, mass={"kind": "nuclides", "a": "1H", "b": "35Cl"})
    >>> result.recommended.d0_cm1, result.recommended.d0_low_cm1, result.recommended.d0_high_cm1
    >>> result.table("estimates")                  # a pandas DataFrame when pandas is installed
    >>> result.figure("spacings")                  # drawn in Jupyter; .save_svg("spacings.svg")
    >>> rungs.analyze_many("spectra/").to_csv("summary.csv")

Failures are :class:`RungsError` exceptions whose message names the row, column or setting;
:class:`InternalError` (a kind of RungsError) means Rungs itself failed, never your data.
"""

from __future__ import annotations

import csv as _csv
import io as _io
import json as _json
import math as _math
import os as _os
from collections.abc import Iterable, Mapping, Sequence
from typing import Any, NamedTuple, Union

from . import _rungs
from ._rungs import InternalError, RungsError

__all__ = [
    "read",
    "analyze",
    "analyze_many",
    "DataSet",
    "Row",
    "Result",
    "Figure",
    "Summary",
    "RungsError",
    "InternalError",
    "__version__",
    "CODATA_YEAR",
]

__version__, CODATA_YEAR = _rungs.version()

#: What :func:`read` and :func:`analyze` accept as data.
Source = Union[str, "_os.PathLike[str]", bytes, Mapping[str, Any], Any]


class Fields(dict):
    """A part of the analysis document: a ``dict`` whose keys can also be read as attributes
    (``result.recommended.d0_cm1`` is ``result.recommended["d0_cm1"]``)."""

    def __getattr__(self, key: str) -> Any:
        try:
            return self[key]
        except KeyError:
            raise AttributeError(
                f"this part of the document has no field '{key}'; its fields are: "
                + ", ".join(self.keys())
            ) from None


def _fields(text: str) -> Fields:
    return _json.loads(text, object_hook=Fields)


class Row(NamedTuple):
    """One row of the input as it was read.

    ``row`` is the line number in the input (the header and comment lines count, as in a text
    editor or a spreadsheet); ``status`` is ``"usable"``, ``"excluded"`` (the row cannot be
    used as written) or ``"excluded_by_user"``; ``reasons`` says why a row is not used, naming
    the column; ``note`` says what was assumed for a usable row (such as a σ taken from the
    other rows)."""

    row: int
    cells: list[str]
    status: str
    reasons: list[str]
    note: str | None


class DataSet:
    """A table as Rungs read it: its kind, delimiter, header row, columns with roles and
    units, and every row with its status and the reason a row is not used.

    Made by :func:`read`; hand it to :func:`analyze`.
    """

    def __init__(self, table: Any) -> None:
        self._table = table
        view = _json.loads(table.view_json())
        #: File name, when the table came from a file.
        self.name: str | None = view["name"]
        #: Whether the text could be read as a table at all.
        self.readable: bool = view["readable"]
        #: Whether the table has enough usable rows for an analysis.
        self.usable: bool = view["usable"]
        #: Why the table cannot be used (None when it can).
        self.problem: str | None = view["problem"]
        #: Kind of data: ``"levels"``, ``"spacings"`` or ``"bands"``.
        self.kind: str | None = view.get("kind")
        #: Cell delimiter found or chosen.
        self.delimiter: str | None = view.get("delimiter")
        #: Line of the header row, if there is one.
        self.header_row: int | None = view.get("header_row")
        #: Columns: number, name, role, unit and a note on how each was understood.
        self.columns: list[Fields] = [Fields(c) for c in view["columns"]]
        #: Every row of the input, used or not.
        self.rows: list[Row] = [
            Row(r["row"], r["cells"], r["status"], r["reasons"], r["note"]) for r in view["rows"]
        ]
        #: What the reading noticed (units assumed, title lines skipped, …).
        self.notes: list[str] = view["notes"]

    @property
    def excluded(self) -> list[Row]:
        """The rows that are not used, with their reasons."""
        return [r for r in self.rows if r.status != "usable"]

    def session_json(self) -> str:
        """The session document (JSON text) that reopens this table, read the same way, in the
        Rungs page or with ``rungs analyze``."""
        return self._table.session_json()

    def to_frame(self) -> Any:
        """The rows as a pandas DataFrame (row, status, reasons, note and the cells by column
        name); a list of dicts when pandas is not installed."""
        names = [c.name for c in self.columns]
        records = []
        for r in self.rows:
            rec: dict[str, Any] = {"row": r.row, "status": r.status}
            for i, name in enumerate(names):
                rec[name or f"column {i + 1}"] = r.cells[i] if i < len(r.cells) else ""
            rec["reasons"] = "; ".join(r.reasons)
            rec["note"] = r.note or ""
            records.append(rec)
        pd = _pandas()
        return pd.DataFrame.from_records(records) if pd is not None else records

    def __repr__(self) -> str:
        if not self.readable:
            return f"<rungs.DataSet: not readable: {self.problem}>"
        used = sum(r.status == "usable" for r in self.rows)
        state = "usable" if self.usable else f"not usable: {self.problem}"
        return (
            f"<rungs.DataSet {self.kind}: {len(self.rows)} rows, {used} used, "
            f"{len(self.rows) - used} not used; {state}>"
        )


class Figure:
    """One figure of an analysis, drawn by the same code as the page's SVG export. Shown
    inline by Jupyter; :meth:`save_svg` writes it to a file."""

    def __init__(self, fig_id: str, title: str, svg: str) -> None:
        self.id = fig_id
        self.title = title
        #: The figure as SVG text.
        self.svg = svg

    def _repr_svg_(self) -> str:
        return self.svg

    def save_svg(self, path: str | _os.PathLike[str]) -> None:
        """Writes the figure as an SVG file."""
        with open(path, "w", encoding="utf-8") as f:
            f.write(self.svg)

    def __repr__(self) -> str:
        return f"<rungs.Figure {self.id}: {self.title}>"


class Result:
    """An analysis: the fields of the analysis document as attributes.

    ``result.recommended``, ``result.estimates``, ``result.constants``, ``result.warnings``,
    ``result.levels``, ``result.spacings``, ``result.fit``, ``result.order_selection``, … are
    the document's fields (for a band list: ``result.states.upper``, ``result.states.lower``,
    ``result.global_fit``, …); :meth:`to_dict` is the whole document, exactly what
    ``rungs analyze FILE --format json`` prints. Every D0 in it is a model-dependent
    estimate (see the document's ``statement`` and ``assumptions``).
    """

    def __init__(self, analysed: Any) -> None:
        self._analysed = analysed
        self._json = analysed.to_json()
        self._doc = _fields(self._json)

    def __getattr__(self, key: str) -> Any:
        if key.startswith("_"):
            raise AttributeError(key)
        try:
            return self._doc[key]
        except KeyError:
            raise AttributeError(
                f"the analysis document has no field '{key}'; its fields are: "
                + ", ".join(self._doc.keys())
            ) from None

    def __dir__(self) -> list[str]:
        return sorted(set(super().__dir__()) | set(self._doc.keys()))

    def to_dict(self) -> dict[str, Any]:
        """The analysis document as plain Python values (a new copy each call)."""
        return _json.loads(self._json)

    def to_json(self) -> str:
        """The analysis document as JSON text: the bytes ``rungs analyze --format json``
        prints, without its final newline. The Rungs page opens it again."""
        return self._json

    @property
    def text(self) -> str:
        """The plain-text report of ``rungs analyze``."""
        return self._analysed.text()

    def figures(self) -> list[tuple[str, str]]:
        """The figures this analysis offers, as ``(id, title)`` pairs."""
        return self._analysed.figures()

    def figure(
        self, fig_id: str | None = None, *, unit: str = "cm-1", width: int = 900, height: int = 560
    ) -> Figure:
        """One figure (the first one when no id is given), energies in ``unit`` (``cm-1``,
        ``eV``, ``kJ/mol``, …)."""
        figs = dict(self.figures())
        if fig_id is None:
            fig_id = self.figures()[0][0]
        svg = self._analysed.figure_svg(fig_id, unit, width, height)
        return Figure(fig_id, figs.get(fig_id, fig_id), svg)

    def _repr_svg_(self) -> str:
        return self.figure().svg

    def save_svg(self, path: str | _os.PathLike[str], fig_id: str | None = None, **kw: Any) -> None:
        """Writes one figure (the first one when no id is given) as an SVG file."""
        self.figure(fig_id, **kw).save_svg(path)

    def tables(self) -> list[tuple[str, str]]:
        """The tables this analysis offers, as ``(id, title)`` pairs."""
        return self._analysed.tables()

    def table_csv(self, table_id: str) -> str:
        """One table as CSV text, the bytes the page and ``rungs analyze --tables`` write
        (energies in cm⁻¹; text that a spreadsheet would run as a formula starts with ')."""
        return self._analysed.table_csv(table_id)

    def table(self, table_id: str) -> Any:
        """One table (``"estimates"``, ``"constants"``, ``"levels"``, ``"rows"``, …; see
        :meth:`tables`) as a pandas DataFrame, or a list of dicts when pandas is not
        installed."""
        return _frame(self.table_csv(table_id))

    def __repr__(self) -> str:
        rec = self._doc.get("recommended")
        if rec is None and "states" in self._doc:
            return f"<rungs.Result {self._doc.get('format')}: both states; see .states>"
        d0 = rec.get("d0_cm1") if rec else None
        if d0 is None:
            return f"<rungs.Result: no recommended D0 ({rec.get('reason', '') if rec else ''})>"
        return (
            f"<rungs.Result D0 ≈ {d0:.6g} cm-1 (interval {rec.get('d0_low_cm1')} to "
            f"{rec.get('d0_high_cm1')}), a model-dependent estimate>"
        )


class Summary:
    """The batch summary of :func:`analyze_many`: one row per file with the recommended D0,
    its σ and interval, the constants with σ, the method and the number of warnings, or the
    message of a file that failed."""

    def __init__(self, rows: list[dict[str, Any]], results: dict[str, Result | RungsError]):
        #: One dict per file, keys as :attr:`columns`.
        self.rows = rows
        #: For each file: its :class:`Result`, or the :class:`RungsError` it raised.
        self.results = results

    columns: list[str] = list(_rungs.summary_columns())

    @property
    def failed(self) -> list[dict[str, Any]]:
        """The rows of the files that could not be analysed."""
        return [r for r in self.rows if r["status"] != "ok"]

    def to_csv(self, path: str | _os.PathLike[str] | None = None) -> str:
        """The summary as CSV text, the bytes ``rungs analyze … --summary`` writes; also
        written to ``path`` when one is given."""
        text = _rungs.summary_csv(_json.dumps(self.rows))
        if path is not None:
            with open(path, "w", encoding="utf-8", newline="") as f:
                f.write(text)
        return text

    def to_frame(self) -> Any:
        """The summary as a pandas DataFrame (a list of dicts when pandas is not installed)."""
        pd = _pandas()
        return pd.DataFrame.from_records(self.rows, columns=self.columns) if pd else self.rows

    def __len__(self) -> int:
        return len(self.rows)

    def __iter__(self):
        return iter(self.rows)

    def __repr__(self) -> str:
        return f"<rungs.Summary: {len(self.rows)} files, {len(self.failed)} failed>"


def _pandas() -> Any:
    try:
        import pandas  # noqa: PLC0415 (optional dependency)
    except ImportError:
        return None
    return pandas


def _frame(csv_text: str) -> Any:
    pd = _pandas()
    if pd is not None:
        return pd.read_csv(_io.StringIO(csv_text), keep_default_na=False, na_values=[""])
    out = []
    for rec in _csv.DictReader(_io.StringIO(csv_text)):
        out.append({k: _number(v) for k, v in rec.items()})
    return out


def _number(text: str) -> Any:
    if text == "":
        return None
    try:
        return int(text)
    except ValueError:
        pass
    try:
        return float(text)
    except ValueError:
        return text


def _cell(x: Any) -> str:
    """One value of an array or DataFrame column as table text (floats in full)."""
    if x is None:
        return ""
    if isinstance(x, str):
        return x
    if isinstance(x, bool):
        return str(x)
    if hasattr(x, "item") and not isinstance(x, (list, tuple)):
        x = x.item()  # NumPy scalars
    if isinstance(x, int):
        return str(x)
    if isinstance(x, float):
        if _math.isnan(x):
            return ""
        return repr(x)
    return str(x)


def _columns_text(columns: Mapping[str, Any]) -> str:
    """Named columns (a DataFrame, or a mapping of names to arrays) as CSV text with a header
    row, which the same reading as any file then reads."""
    names = [str(n) for n in columns.keys()]
    values = [list(columns[n]) for n in columns.keys()]
    lengths = {len(v) for v in values}
    if len(lengths) > 1:
        raise RungsError(
            "the columns have different lengths: "
            + ", ".join(f"{n} has {len(v)}" for n, v in zip(names, values))
        )
    out = _io.StringIO()
    w = _csv.writer(out, lineterminator="\n")
    w.writerow(names)
    for i in range(lengths.pop() if lengths else 0):
        w.writerow([_cell(v[i]) for v in values])
    return out.getvalue()


def _source_bytes(source: Any, name: str | None) -> tuple[bytes, str | None]:
    if isinstance(source, bytes):
        return source, name
    if isinstance(source, _os.PathLike) or (
        isinstance(source, str) and "\n" not in source and _os.path.isfile(source)
    ):
        path = _os.fspath(source)
        try:
            with open(path, "rb") as f:
                data = f.read()
        except OSError as e:
            raise RungsError(f"{path}: cannot read the file: {e.strerror}") from None
        return data, name or _os.path.basename(path)
    if isinstance(source, str):
        return source.encode("utf-8"), name
    if hasattr(source, "columns") and hasattr(source, "__getitem__"):  # a pandas DataFrame
        return _columns_text({c: source[c] for c in source.columns}).encode("utf-8"), name
    if isinstance(source, Mapping):
        return _columns_text(source).encode("utf-8"), name
    if hasattr(source, "ndim") and getattr(source, "ndim", 0) == 2:  # a 2-D array, no header
        out = _io.StringIO()
        w = _csv.writer(out, lineterminator="\n")
        for line in source:
            w.writerow([_cell(x) for x in line])
        return out.getvalue().encode("utf-8"), name
    raise RungsError(
        "cannot read this: give a file path, the text of a table, bytes, a pandas DataFrame, "
        "a dict of column names to arrays, or a 2-D array"
    )


def read(
    source: Source,
    *,
    name: str | None = None,
    kind: str | None = None,
    unit: str | None = None,
    header: bool | None = None,
    delimiter: str | None = None,
    heads: bool = False,
    columns: Mapping[int, str | tuple[str | None, str | None]] | None = None,
    exclude: Mapping[int, str] | Iterable[int] | None = None,
) -> DataSet:
    """Reads a table and shows how it was read.

    ``source`` is a file path, the text of a table, bytes, a session document or an exported
    analysis (as the page and ``rungs analyze`` accept), a pandas DataFrame, a dict of column
    names to NumPy arrays or lists, or a 2-D array (columns in the order v, E, σ, B — or
    v, ΔG, σ; v′, v″, ν, σ). Named columns are read by their names exactly as a file's header
    would be (``"E (eV)"`` is an energy in eV). Values from arrays are written out in full, so
    nothing is rounded; row numbers then count the header as line 1 (the first array element
    is row 2).

    Every choice overrides what would be detected:

    - ``kind``: ``"levels"``, ``"spacings"`` or ``"bands"``;
    - ``unit``: unit of value columns whose header names none (``"cm-1"``, ``"eV"``,
      ``"kJ/mol"``, ``"nm-air"``, …);
    - ``header``: whether the first row is a header; ``delimiter``: ``"comma"``, ``"tab"``,
      ``"semicolon"`` or ``"whitespace"``; ``heads``: band positions are band heads;
    - ``columns``: role and/or unit of a column by its number (1 = first), e.g.
      ``{2: "energy:eV", 3: "sigma", 4: (None, "nm-air")}``;
    - ``exclude``: rows (line numbers) to leave out, with reasons: ``{12: "perturbed"}`` or
      ``[12, 13]``.

    Raises :class:`RungsError` when a choice is not understood or an excluded row does not
    exist. A table that cannot be analysed is still returned: see ``usable`` and ``problem``.
    """
    data, name = _source_bytes(source, name)
    cols = []
    for index, spec in (columns or {}).items():
        if isinstance(index, bool) or not isinstance(index, int) or index < 1:
            raise RungsError(
                f"columns: {index!r} is not a column number (1 is the first column)"
            )
        if isinstance(spec, str):
            role, _, u = spec.partition(":")
            cols.append((int(index), role or None, u or None))
        else:
            role, u = spec
            cols.append((int(index), role, u))
    if exclude is None:
        excl: list[tuple[int, str]] = []
    elif isinstance(exclude, Mapping):
        excl = [(int(r), str(why)) for r, why in exclude.items()]
    else:
        excl = [(int(r), "excluded in Python") for r in exclude]
    choices = {
        "kind": kind,
        "unit": unit,
        "header": header,
        "delimiter": delimiter,
        "heads": bool(heads),
        "columns": cols,
        "exclude": excl,
    }
    return DataSet(_rungs.read(data, name, _json.dumps(choices)))


def _settings(settings: dict[str, Any]) -> str:
    s = dict(settings)
    if "mu" in s:
        s["mass"] = {"kind": "reduced_mass", "mu_u": float(s.pop("mu"))}
    if "masses" in s:
        m = s.pop("masses")
        a, b = m.split(",") if isinstance(m, str) else m
        s["mass"] = {"kind": "nuclides", "a": str(a).strip(), "b": str(b).strip()}
    return _json.dumps(s)


def analyze(data: DataSet | Source, **settings: Any) -> Result:
    """Analyses a table: vibrational constants with σ, the order selection, the dissociation
    limit by every method and the recommended D0 ± σ_stat ± σ_model with its interval. Every
    D0 is a model-dependent estimate, as the document's ``statement`` says.

    ``data`` is a :class:`DataSet` from :func:`read`, or anything :func:`read` accepts (read
    with the detected choices).

    Settings are named as in the session document, for example ``mc_samples`` (Monte Carlo
    draws, 0 for none), ``seed``, ``lb_n`` (long-range exponent n), ``lb_top_levels``,
    ``order`` (force the G(v) order), ``max_order``, ``lb_fit_n_free``, ``lb_cn_cm1_an``
    (theoretical C_n), ``asymptote_cm1`` (a known asymptote), ``sigma_scaling``
    (``"never"``, ``"when-above-one"``, ``"always"``), ``outlier_threshold``, ``mass``, and
    ``bands`` (a dict of band-list settings, e.g. ``{"predict": ["DCl"]}``). Two short forms
    give the mass: ``mu=0.9796`` (reduced mass in u) or ``masses=("1H", "35Cl")``.

    With the same table and settings the result is the one ``rungs analyze`` gives (its
    defaults are the same). Raises :class:`RungsError` with the page's and the command line's
    message; when the table was read, the error's ``rows`` lists the rows not used, with
    their reasons.
    """
    ds = data if isinstance(data, DataSet) else read(data)
    try:
        return Result(_rungs.analyze(ds._table, _settings(settings)))
    except InternalError:
        raise
    except RungsError as e:
        e.rows = ds.excluded
        raise


def analyze_many(
    sources: str | _os.PathLike[str] | Sequence[str | _os.PathLike[str]],
    *,
    summary: str | _os.PathLike[str] | None = None,
    **settings: Any,
) -> Summary:
    """Analyses many files with the same settings (see :func:`analyze`) and returns the
    batch summary, one row per file: ``rungs analyze A B … --summary FILE`` from Python.

    ``sources`` is a folder (every file in it, in name order; names starting with ``.`` are
    skipped) or a list of paths. A file that cannot be read or analysed becomes a row with its
    message; the run goes on. With ``summary``, the CSV is also written there.
    """
    if isinstance(sources, (str, _os.PathLike)) and _os.path.isdir(sources):
        folder = _os.fspath(sources)
        paths = [
            _os.path.join(folder, n)
            for n in sorted(_os.listdir(folder))
            if not n.startswith(".") and _os.path.isfile(_os.path.join(folder, n))
        ]
    elif isinstance(sources, (str, _os.PathLike)):
        paths = [_os.fspath(sources)]
    else:
        paths = [_os.fspath(p) for p in sources]
    rows: list[dict[str, Any]] = []
    results: dict[str, Result | RungsError] = {}
    for path in paths:
        try:
            result = analyze(read(path), **settings)
        except RungsError as e:  # InternalError too: one file never ends the run
            message = str(e) if str(e).startswith(f"{path}: ") else f"{path}: {e}"
            rows.append(_json.loads(_rungs.failed_row(path, message)))
            results[path] = e
            continue
        rows.append(_json.loads(result._analysed.summary_row(path)))
        results[path] = result
    out = Summary(rows, results)
    if summary is not None:
        out.to_csv(summary)
    return out
