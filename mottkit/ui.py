"""Widget panels for JupyterLab and Voilà: thin layers over the screening core and the charts.

Each panel is a plain object whose ``.widget`` is the ipywidgets box to
display (a bare ``panel`` at the end of a cell shows it too). Callbacks are a
few lines: they call :func:`mottkit.screen` or another core function and write
the answer into the chart and the table. The criterion chart is a
``plotly.graph_objects.FigureWidget`` built whole when the panel is made, so it
draws in Voilà, and afterwards only updated in place.

The panels never write a measurement file: annotations go to the sidecar
(:func:`mottkit.annotate`), exports to new files beside the data. Uploaded
files are read from memory and the upload widget is cleared at once, so a
saved notebook never holds their contents. No plotly renderer is set here.
"""

from __future__ import annotations

import contextlib
import html
import io
import os
import warnings
from pathlib import Path

import ipywidgets as widgets
import numpy as np
import pandas as pd

from . import _plot_criterion as C
from . import _plot_style as S
from ._ui_panels import HallPanel, PlanningPanel, TransportPanel, sync_state, table_html
from .annotations import annotate, load_annotations, sidecar_path
from .batch import RESULT_COLUMNS, VERDICTS, screen
from .criterion import MOTT_CONSTANT, MOTT_CONSTANT_SCATTER
from .errors import InputError, MottkitError, MottkitWarning
from .ingest import read_measurements
from .materials import canonical_host_name, hosts

__all__ = ["HallPanel", "PlanningPanel", "ScreeningPanel", "TransportPanel"]

#: Host choice that keeps each row's own host column.
FROM_FILE = "(from file)"
#: Rows shown in the results table (the rest are counted, and exported).
TABLE_ROWS = 200
_TABLE_COLUMNS = ("sample", "batch", "host", "temperature_k", "density_cm3", "bohr_radius_nm",
                  "density_ratio", "p_metallic", "verdict", "cautions", "note", "tags",
                  "excluded", "message")  # fmt: skip
_CONSTANT_RANGE = (0.15, 0.40)


class _Editor:
    """Annotation editor: pick a film, edit its note, tags and exclude flag, save."""

    def __init__(self) -> None:
        wide = widgets.Layout(width="32em")
        self.sample = widgets.Dropdown(description="film", options=[], layout=wide)
        self.note = widgets.Textarea(description="note", placeholder="free text", layout=wide)
        self.tags = widgets.Text(description="tags", placeholder="tag one; tag two", layout=wide)
        self.exclude = widgets.Checkbox(description="exclude (kept in the table, drawn hollow)")
        self.save_button = widgets.Button(description="Save annotation", icon="save")
        self.widget = widgets.VBox(
            [widgets.HTML("<b>Annotate a film</b> (saved beside the data file)"), self.sample,
             self.note, self.tags, self.exclude, self.save_button]
        )  # fmt: skip


class ScreeningPanel:
    """Load a measurement table, screen it, filter, annotate and export, with the criterion chart.

    Parameters
    ----------
    source : str, path-like or pandas.DataFrame, optional
        A measurement file (read with :func:`mottkit.read_measurements`) or a
        table in its canonical columns; annotations and exports need a file.
    host : str, optional
        Host for every film, overriding the file's host column; default: the
        file's own.
    constant : float, optional
        Criterion constant n_c^(1/3) a_B* [-]; default 0.26 (Edwards & Sienko,
        Phys. Rev. B 17, 2575 (1978)); the slider spans 0.15–0.40.
    constant_err : float, optional
        Scatter of the constant [-]; default 0.05 (same source).

    Attributes
    ----------
    widget : ipywidgets.VBox
        What to display.
    result : pandas.DataFrame
        The current screening result, all rows (filters only hide rows).
    figure : plotly.graph_objects.FigureWidget
        The criterion chart (see :func:`mottkit.plots.criterion_chart`).
    table : ipywidgets.HTML
        The first rows of the filtered result, escaped.
    status : ipywidgets.HTML
        Messages: what was loaded, invalid rows, files written, errors.

    Notes
    -----
    ε_r, m* and T set to 0 mean "from the file or the host table". A change of
    host, ε_r, m*, T or the constant screens the table once
    (:meth:`_on_physics_change`); a change of filter only masks the cached
    result and updates the chart traces in place.
    """

    def __init__(
        self,
        source=None,
        *,
        host: str | None = None,
        constant: float = MOTT_CONSTANT,
        constant_err: float = MOTT_CONSTANT_SCATTER,
    ) -> None:
        c, self._constant_err = C.check_constant(constant, constant_err)
        self._table: pd.DataFrame | None = None
        self._data_path: Path | None = None
        self._name = ""
        self._quiet_depth = 0
        self._editor_options: list = []
        self.result = pd.DataFrame({col: [] for col in RESULT_COLUMNS})
        self._films = C.films(self.result)
        self._batch = np.array([], dtype=object)
        self._xr, self._yr = C.view(self._films, c)

        self.path_control = widgets.Text(description="file", placeholder="path to a measurement CSV",
                                         layout=widgets.Layout(width="36em"))  # fmt: skip
        self.load_button = widgets.Button(description="Load", icon="folder-open")
        self.upload = widgets.FileUpload(accept=".csv,.tsv,.txt", multiple=False,
                                         description="Upload")  # fmt: skip
        names = list(hosts()["name"])
        self.host_control = widgets.Dropdown(
            description="host", options=[FROM_FILE, *names],
            value=FROM_FILE if host is None else canonical_host_name(host),
        )  # fmt: skip
        small = widgets.Layout(width="13em")
        self.eps_control = widgets.FloatText(value=0.0, description="ε_r", layout=small,
                                             tooltip="0 = host default")  # fmt: skip
        self.mass_control = widgets.FloatText(value=0.0, description="m*/m_e", layout=small,
                                              tooltip="0 = host default")  # fmt: skip
        self.temperature_control = widgets.FloatText(value=0.0, description="T [K]", layout=small,
                                                     tooltip="0 = from the file")  # fmt: skip
        self.constant_control = widgets.FloatSlider(
            value=c, min=min(_CONSTANT_RANGE[0], c), max=max(_CONSTANT_RANGE[1], c), step=0.005,
            readout_format=".3f", continuous_update=False, description="constant",
            layout=widgets.Layout(width="30em"),
        )  # fmt: skip
        self.batch_filter = widgets.SelectMultiple(description="batch", options=[], rows=5)
        self.verdict_filter = widgets.SelectMultiple(
            description="verdict", options=VERDICTS, rows=4
        )
        self.table = widgets.HTML()
        self.status = widgets.HTML()
        self.editor = _Editor()
        self.export_button = widgets.Button(description="Export results CSV", icon="download")
        self.export_notes_button = widgets.Button(
            description="Export annotations", icon="download"
        )

        self.figure = None  # built complete by the first redraw, below

        for control in (self.host_control, self.eps_control, self.mass_control,
                        self.temperature_control, self.constant_control):  # fmt: skip
            control.observe(self._physics_event, names="value")
        for control in (self.batch_filter, self.verdict_filter):
            control.observe(self._filter_event, names="value")
        self.editor.sample.observe(self._pick_event, names="value")
        self.editor.save_button.on_click(lambda _: self._guarded(self.save_annotation))
        self.export_button.on_click(lambda _: self._guarded(self.export_results))
        self.export_notes_button.on_click(lambda _: self._guarded(self.export_annotations))
        self.load_button.on_click(lambda _: self._guarded(self.load, self.path_control.value))
        self.upload.observe(self._upload_event, names="value")

        if source is not None:
            self.load(source)
        else:
            self._redraw(axes=True)
        self.widget = widgets.VBox([
            widgets.HBox([self.path_control, self.load_button, self.upload]),
            widgets.HBox([self.host_control, self.eps_control, self.mass_control,
                          self.temperature_control]),
            self.constant_control,
            widgets.HBox([self.batch_filter, self.verdict_filter]),
            self.figure,
            self.table,
            widgets.HBox([self.editor.widget,
                          widgets.VBox([self.export_button, self.export_notes_button])]),
            self.status,
        ])  # fmt: skip

    # ------------------------------------------------------------------ display
    def _ipython_display_(self) -> None:
        from IPython.display import display

        sync_state(self.figure)
        display(self.widget)

    def _repr_mimebundle_(self, **kwargs):
        sync_state(self.figure)
        return self.widget._repr_mimebundle_(**kwargs)

    # ------------------------------------------------------------------ loading
    def load(self, source, *, name: str | None = None) -> pd.DataFrame:
        """Read a measurement table (path, DataFrame or binary file object) and screen it.

        Parameters
        ----------
        source : str, path-like, pandas.DataFrame or file object
            What to read; a path becomes the data file that annotations and
            exports sit beside.
        name : str, optional
            Label of a DataFrame or file object (e.g. the uploaded file's name).

        Returns
        -------
        pandas.DataFrame
            The screening result (also in :attr:`result`).

        Raises
        ------
        InputError, ReadError
            If the source is not a table mottkit can read (the message names
            the file, line and column).
        """
        if isinstance(source, pd.DataFrame):
            table, path, label = source.reset_index(drop=True), None, name or "table"
        elif isinstance(source, (str, os.PathLike)):
            if not str(source).strip():
                raise InputError("file: give the path of a measurement table to load")
            path = Path(source).expanduser()
            table, label = read_measurements(path), str(path)
        elif hasattr(source, "read"):
            table, path, label = read_measurements(source), None, name or "uploaded table"
        else:
            raise InputError(
                f"source must be a path, a DataFrame or a file object, got {type(source).__name__}"
            )
        self._table, self._data_path, self._name = table, path, label
        if path is not None:
            with self._quiet():
                self.path_control.value = str(path)
        return self._on_physics_change()

    def refresh(self) -> pd.DataFrame:
        """Read the data file again (if the panel has one), screen it and redraw."""
        if self._data_path is not None:
            self._table = read_measurements(self._data_path)
        return self._on_physics_change()

    def _upload_event(self, change) -> None:
        files = change["new"]
        if not files:
            return
        item = files[0]
        content, name = bytes(item["content"]), str(item.get("name", "uploaded table"))
        with self._quiet():
            self.upload.value = ()  # the widget state must never keep the file's contents
        self._guarded(self.load, io.BytesIO(content), name=name)

    # ------------------------------------------------------------------ physics and filters
    def _overrides(self) -> dict:
        over = {}
        if self.host_control.value != FROM_FILE:
            over["host"] = self.host_control.value
        if self.eps_control.value > 0:
            over.update(eps_r=float(self.eps_control.value), eps_r_err=np.nan)
        if self.mass_control.value > 0:
            over.update(mass_ratio=float(self.mass_control.value), mass_ratio_err=np.nan)
        if self.temperature_control.value > 0:
            over["temperature_k"] = float(self.temperature_control.value)
        return over

    def _on_physics_change(self) -> pd.DataFrame:
        """Screen the table once with the current controls, then redraw (benchmarks call this)."""
        if self._table is None:
            self._redraw(axes=True)
            return self.result
        table = self._table.assign(**self._overrides())
        notes_from = self._data_path
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", MottkitWarning)
            try:
                result = screen(table, constant=self.constant_control.value,
                                constant_err=self._constant_err, annotations=notes_from)  # fmt: skip
            except InputError as exc:
                if notes_from is None:
                    raise
                result = screen(table, constant=self.constant_control.value,
                                constant_err=self._constant_err)  # fmt: skip
                caught.append(warnings.WarningMessage(
                    f"annotations not used: {exc}", MottkitWarning, "", 0))  # fmt: skip
        self.result = result
        self._films = C.films(result)
        self._batch = S.text_column(result, "batch")
        self._xr, self._yr = C.view(self._films, self.constant_control.value)
        self._update_choices()
        self._redraw(axes=True)
        self._report_load([str(w.message) for w in caught])
        return result

    def _physics_event(self, change) -> None:
        if not self._quiet_depth:
            self._guarded(self._on_physics_change)

    def _filter_event(self, change) -> None:
        if not self._quiet_depth:
            self._on_filter_change()

    def _on_filter_change(self) -> None:
        """Mask the cached result with the filters and redraw (no screening)."""
        self._redraw(axes=False)

    def mask(self) -> np.ndarray:
        """Rows of :attr:`result` that the batch and verdict filters let through."""
        keep = np.ones(len(self.result), dtype=bool)
        if self.batch_filter.value:
            keep &= np.isin(self._batch, list(self.batch_filter.value))
        if self.verdict_filter.value:
            keep &= np.isin(self._films.verdict, list(self.verdict_filter.value))
        return keep

    def _traces(self, mask) -> list[dict]:
        temperature = self.temperature_control.value
        return C.traces(self._films, mask, constant=self.constant_control.value,
                        constant_err=self._constant_err, screening=True,
                        temperature_k=temperature if temperature > 0 else None, xr=self._xr,
                        fixed=True)  # fmt: skip

    def _redraw(self, *, axes: bool) -> None:
        mask = self.mask()
        new = self._traces(mask)
        look = C.layout(self._films, mask, constant=self.constant_control.value, xr=self._xr,
                        yr=self._yr)  # fmt: skip
        self.table.value = self._table_html(mask)
        if self.figure is None:  # first drawing: the widget starts out complete
            go, _ = S.plotly_modules()
            self.figure = go.FigureWidget(data=new, layout=look)
            self.figure.update_layout(height=560)
            return
        with self.figure.batch_update():
            for trace, fresh in zip(self.figure.data, new, strict=True):
                for key in ("x", "y", "hovertext", "customdata", "marker", "name", "showlegend",
                            "meta"):  # fmt: skip
                    if key in fresh:
                        trace[key] = fresh[key]
            self.figure.update_layout(title=look["title"], annotations=look["annotations"],
                                      meta=look["meta"])  # fmt: skip
            if axes:
                self.figure.update_layout(xaxis_range=self._xr, yaxis_range=self._yr)
        sync_state(self.figure)

    def _table_html(self, mask: np.ndarray) -> str:
        if self._table is None:
            return "<p>No table loaded: give a file path and press Load, or upload a file.</p>"
        shown = self.result.loc[mask, [c for c in _TABLE_COLUMNS if c in self.result.columns]]
        head = (f"showing {min(len(shown), TABLE_ROWS)} of {len(shown)} films "
                f"({len(self.result)} in {html.escape(self._name)}); verdicts are "
                f"{S.CAVEAT}: read the cautions")  # fmt: skip
        return table_html(shown.head(TABLE_ROWS), head)

    def _update_choices(self) -> None:
        with self._quiet():
            batches = sorted(set(self._batch) - {""})
            keep = [b for b in self.batch_filter.value if b in batches]
            self.batch_filter.options = batches
            self.batch_filter.value = tuple(keep)
            keys = pd.unique(pd.Series(list(zip(self._batch, self._films.sample, strict=True)),
                                       dtype=object)) if len(self.result) else []  # fmt: skip
            options = [(f"{s} ({b})" if b else s, (b, s)) for b, s in keys if s]
            if options != self._editor_options:  # 10⁴ films: send the list only when it changes
                old = self.editor.sample.value
                self.editor.sample.options = options
                self._editor_options = options
                values = [v for _, v in options]
                self.editor.sample.value = (
                    old if old in values else (values[0] if values else None)
                )
        self._pick_event(None)

    # ------------------------------------------------------------------ annotations
    def _pick_event(self, change) -> None:
        key = self.editor.sample.value
        if key is None or not len(self.result):
            return
        rows = np.flatnonzero((self._batch == key[0]) & (self._films.sample == key[1]))
        if not rows.size:
            return
        row = self.result.iloc[int(rows[0])]
        tags = row.get("tags", ())
        self.editor.note.value = str(row.get("note", "") or "")
        self.editor.tags.value = "; ".join(tags) if isinstance(tags, tuple) else ""
        self.editor.exclude.value = bool(row.get("excluded", False))

    def save_annotation(self) -> dict:
        """Save the editor's note, tags and exclude flag to the data file's sidecar, then redraw.

        Returns
        -------
        dict
            The entry as saved (see :func:`mottkit.annotate`).

        Raises
        ------
        InputError
            If the data came from an upload or a DataFrame (no file to keep the
            sidecar beside) or no film is chosen.
        """
        if self._data_path is None:
            raise InputError(
                f"{self._name or 'the data'} has no data file to keep annotations beside: "
                "load the table from a file path to annotate"
            )
        key = self.editor.sample.value
        if key is None:
            raise InputError("choose a film in the annotation editor first")
        tags = [t.strip() for t in self.editor.tags.value.split(";") if t.strip()]
        entry = annotate(self._data_path, key[0], key[1], note=self.editor.note.value,
                         tags=tags, exclude=bool(self.editor.exclude.value))  # fmt: skip
        self._on_physics_change()
        self._say(f"annotation of {key[1]!r} saved to {sidecar_path(self._data_path)}")
        return entry

    # ------------------------------------------------------------------ export
    def _target(self, path, suffix: str) -> Path:
        if path is not None:
            target = Path(path)
        elif self._data_path is not None:
            target = self._data_path.with_name(self._data_path.stem + suffix)
        else:
            stem = Path(self._name).stem if self._name else "screening"
            target = Path.cwd() / (stem + suffix)
        if self._data_path is not None:
            protected = {self._data_path.resolve(), sidecar_path(self._data_path).resolve()}
            if target.resolve() in protected:
                raise InputError(f"path {str(target)!r} is the data file or its sidecar; "
                                 "exports never overwrite them")  # fmt: skip
        return target

    def export_results(self, path: str | os.PathLike | None = None) -> Path:
        """Write the whole current result (all rows, every column) as CSV.

        Parameters
        ----------
        path : str or path-like, optional
            Where to write; default ``<data stem>.screened.csv`` beside the data
            file (or in the working folder for an upload).

        Returns
        -------
        pathlib.Path
            The file written.

        Raises
        ------
        InputError
            If nothing is loaded or ``path`` is the data file or its sidecar.
        """
        if self._table is None:
            raise InputError("nothing to export: load a measurement table first")
        target = self._target(path, ".screened.csv")
        out = self.result.copy()
        if "tags" in out.columns:
            out["tags"] = out["tags"].map(lambda t: "; ".join(t) if isinstance(t, tuple) else "")
        out.to_csv(target, index=False)
        self._say(f"results written to {target}")
        return target

    def export_annotations(self, path: str | os.PathLike | None = None) -> Path:
        """Write the data file's annotations as CSV (default ``<data stem>.annotations.csv``).

        Returns
        -------
        pathlib.Path
            The file written.

        Raises
        ------
        InputError
            If the data has no file (upload or DataFrame), or ``path`` is the
            data file or its sidecar.
        """
        if self._data_path is None:
            raise InputError(f"{self._name or 'the data'} has no data file, so no annotations")
        target = self._target(path, ".annotations.csv")
        notes = load_annotations(self._data_path)
        notes["tags"] = notes["tags"].map(lambda t: "; ".join(t))
        notes.to_csv(target, index=False)
        self._say(f"annotations written to {target}")
        return target

    # ------------------------------------------------------------------ messages
    @contextlib.contextmanager
    def _quiet(self):
        self._quiet_depth += 1
        try:
            yield
        finally:
            self._quiet_depth -= 1

    def _say(self, text: str, *, error: bool = False) -> None:
        colour = "#B00020" if error else "inherit"
        self.status.value = f'<span style="color: {colour}">{html.escape(text)}</span>'

    def _guarded(self, action, *args, **kwargs):
        """Run a button's action; a mottkit error goes to the status line, not a traceback."""
        try:
            return action(*args, **kwargs)
        except (MottkitError, OSError) as exc:
            self._say(str(exc), error=True)
            return None

    def _report_load(self, warnings_seen: list[str]) -> None:
        counts = self.result["verdict"].value_counts()
        parts = [f"{len(self.result)} rows of {self._name}: "
                 + ", ".join(f"{int(counts.get(v, 0))} {v}" for v in VERDICTS)]  # fmt: skip
        bad = self.result.loc[self._films.verdict == "invalid", "message"].astype(str)
        if len(bad):
            parts.append(f"invalid rows (in the table, not plotted), first: {bad.iloc[0]}")
        parts += warnings_seen
        self._say(" | ".join(parts))
