"""The Python package against the command line (the reference: the issue asks for exactly the
CLI's `--format json` document), bad input against the CLI's messages, a notebook-style
session on NumPy arrays checked against closed-form Morse values, and the batch summary."""

import json
import shutil
import sys

import numpy as np
import pytest

import rungs
from conftest import DEMO, run_cli

MC = "300"

# (demo file, CLI options, the same settings in Python)
CASES = [
    ("qz2-levels.csv", ["--mc", MC, "--mu", "14.5"], {"mc_samples": 300, "mu": 14.5}),
    ("qz2-levels.csv", [], {}),  # every default, 2000 Monte Carlo draws
    ("qz2-spacings.csv", ["--mc", MC], {"mc_samples": 300}),
    ("qz2-low-levels.csv", ["--mc", MC, "--n", "5"], {"mc_samples": 300, "lb_n": 5.0}),
    ("qz2-bands.csv", ["--mc", MC], {"mc_samples": 300}),
    ("qz2-bands.session.json", [], {}),
]


@pytest.mark.parametrize("name,cli_args,settings", CASES)
def test_the_document_is_the_clis_json(cli, name, cli_args, settings):
    path = DEMO / name
    out = run_cli(cli, "analyze", str(path), "--format", "json", *cli_args)
    assert out.returncode == 0, out.stderr
    result = rungs.analyze(rungs.read(path), **settings)
    assert result.to_json() + "\n" == out.stdout
    assert result.to_dict() == json.loads(out.stdout)
    # The fields mirror the document.
    doc = json.loads(out.stdout)
    if "recommended" in doc:
        assert result.recommended.d0_cm1 == doc["recommended"]["d0_cm1"]
        assert result.constants.we_cm1.value == doc["constants"]["we_cm1"]["value"]
        assert [e.method for e in result.estimates] == [e["method"] for e in doc["estimates"]]
    else:
        assert result.states.lower.recommended == doc["states"]["lower"]["recommended"]


def test_text_and_path_and_bytes_read_alike(cli):
    path = DEMO / "qz2-levels.csv"
    text = path.read_text(encoding="utf-8")
    a = rungs.analyze(rungs.read(path), mc_samples=50).to_dict()
    b = rungs.analyze(rungs.read(text, name="qz2-levels.csv"), mc_samples=50).to_dict()
    c = rungs.analyze(rungs.read(text.encode(), name="qz2-levels.csv"), mc_samples=50).to_dict()
    assert a == b == c


def test_how_the_table_was_read_is_shown_row_by_row(cli, tmp_path):
    f = tmp_path / "t.csv"
    f.write_text("v,E,sigma\n0,0,0.1\n1,abc,0.1\n2,400,0.1\n3,590,0.1\n4,770,0.1\n")
    data = rungs.read(f, exclude={6: "perturbed"})
    check = run_cli(cli, "check", str(f), "--exclude", "6=perturbed")
    assert data.kind == "levels" and data.usable
    by_row = {r.row: r for r in data.rows}
    assert by_row[3].status == "excluded"
    assert any("column" in why and "E" in why for why in by_row[3].reasons), by_row[3]
    assert by_row[6].status == "excluded_by_user" and by_row[6].reasons == ["perturbed"]
    assert [r.status for r in data.rows].count("usable") == 3
    # `rungs check` names the same rows and reasons (its text is the reference).
    for why in by_row[3].reasons:
        assert why in check.stdout, check.stdout
    assert [c.role for c in data.columns] == ["v", "energy", "sigma"]


def test_bad_input_raises_the_documented_exception_with_the_clis_message(cli, tmp_path):
    f = tmp_path / "bad.csv"
    f.write_text("v,E\n0,0\n1,abc\n2,400\n")
    out = run_cli(cli, "analyze", str(f))
    assert out.returncode == 2
    with pytest.raises(rungs.RungsError) as caught:
        rungs.analyze(rungs.read(f))
    # The CLI prefixes "rungs analyze: FILE: "; the message itself is the same.
    assert out.stderr.strip() == f"rungs analyze: {f}: {caught.value}"
    assert not isinstance(caught.value, rungs.InternalError)
    # The row that was left out is named, with the column and the reason.
    (row,) = caught.value.rows
    assert row.row == 3 and row.status == "excluded"
    assert "'E'" in row.reasons[0]

    g = tmp_path / "unit.csv"
    g.write_text("v,E (MeV)\n0,0\n1,200\n2,400\n")
    out = run_cli(cli, "analyze", str(g))
    with pytest.raises(rungs.RungsError) as caught:
        rungs.analyze(g)
    assert out.stderr.strip() == f"rungs analyze: {g}: {caught.value}"
    assert "column 2 ('E (MeV)')" in str(caught.value)


def test_bad_choices_and_settings_name_what_is_wrong(cli, tmp_path):
    path = DEMO / "qz2-levels.csv"
    with pytest.raises(rungs.RungsError, match="no data row 400"):
        rungs.read(path, exclude=[400])
    out = run_cli(cli, "check", str(path), "--exclude", "400")
    assert "the table has no data row 400" in out.stderr
    with pytest.raises(rungs.RungsError, match="no setting 'mc'"):
        rungs.analyze(path, mc=10)
    with pytest.raises(rungs.RungsError, match="mc_samples"):
        rungs.analyze(path, mc_samples="many")
    with pytest.raises(rungs.RungsError, match="MeV"):
        rungs.read(path, unit="MeV")
    with pytest.raises(rungs.RungsError, match="not a column number"):
        rungs.read(path, columns={"E": "energy"})
    with pytest.raises(rungs.RungsError, match="role"):
        rungs.read(path, columns={2: "nonsense"})


def test_a_panic_arrives_as_internal_error_not_as_a_crash():
    with pytest.raises(rungs.InternalError) as caught:
        rungs._rungs._panic_for_test()
    assert isinstance(caught.value, rungs.RungsError)
    assert isinstance(caught.value, Exception)  # pyo3's PanicException is a BaseException
    assert "internal error" in str(caught.value)


def test_help_shows_docstrings_that_say_estimates_are_model_dependent():
    for thing in (rungs, rungs.analyze, rungs.read, rungs.analyze_many, rungs.Result):
        assert thing.__doc__ and len(thing.__doc__) > 80
    assert "model-dependent" in rungs.__doc__ and "model-dependent" in rungs.analyze.__doc__
    assert rungs.RungsError.__module__ == "rungs" and rungs.RungsError.__doc__


def test_notebook_style_morse_levels_from_numpy_arrays(tmp_path):
    # SYNTHETIC data: levels of a Morse oscillator, G(v) = ωe(v+½) − ωexe(v+½)², from its
    # closed form (Morse, Phys. Rev. 34, 57 (1929)), every level but the highest ones.
    we, wexe = 250.0, 2.5
    v = np.arange(0, 30)
    g = we * (v + 0.5) - wexe * (v + 0.5) ** 2
    energy = g - g[0]
    sigma = np.full(v.shape, 0.01)
    data = rungs.read({"v": v, "E (cm-1)": energy, "sigma": sigma})
    assert data.usable and len(data.rows) == 30 and data.rows[0].row == 2
    result = rungs.analyze(data, mc_samples=200, seed=7)
    c = result.constants
    assert abs(c.we_cm1.value - we) < 1e-6 * we
    assert abs(c.wexe_cm1.value - wexe) < 1e-6 * wexe
    # D0 of a Morse well: ωe²/(4ωexe) − G(0), G(0) = ωe/2 − ωexe/4.
    d0_true = we**2 / (4 * wexe) - (we / 2 - wexe / 4)
    rec = result.recommended
    assert rec.d0_low_cm1 <= d0_true <= rec.d0_high_cm1, (rec, d0_true)
    # Figures render for Jupyter and save as SVG.
    assert result._repr_svg_().lstrip().startswith("<svg")
    fig = result.figure("spacings", unit="eV")
    assert "<svg" in fig._repr_svg_()
    fig.save_svg(tmp_path / "spacings.svg")
    assert (tmp_path / "spacings.svg").read_text().lstrip().startswith("<svg")
    # Tables: DataFrames with pandas, dicts without.
    estimates = result.table("estimates")
    methods = [e.method for e in result.estimates]
    try:
        import pandas as pd
    except ImportError:
        pd = None
    if pd is not None:
        assert isinstance(estimates, pd.DataFrame)
        # The table adds a last row for the recommended value.
        assert list(estimates["method"]) == methods + ["recommended"]
        frame = rungs.analyze(
            pd.DataFrame({"v": v, "E (cm-1)": energy, "sigma": sigma}), mc_samples=200, seed=7
        )
        assert frame.to_dict() == result.to_dict()
    else:
        assert [row["method"] for row in estimates] == methods + ["recommended"]


def test_tables_without_pandas_are_lists_of_dicts(monkeypatch):
    monkeypatch.setitem(sys.modules, "pandas", None)  # import pandas now fails
    result = rungs.analyze(DEMO / "qz2-levels.csv", mc_samples=0)
    rows = result.table("constants")
    assert isinstance(rows, list) and isinstance(rows[0], dict)
    assert isinstance(rungs.read(DEMO / "qz2-levels.csv").to_frame(), list)


def test_the_batch_summary_is_the_clis_on_a_folder_with_a_bad_file(cli, tmp_path, monkeypatch):
    folder = tmp_path / "spectra"
    folder.mkdir()
    for name in ("qz2-levels.csv", "qz2-spacings.csv", "qz2-bands.csv"):
        shutil.copy(DEMO / name, folder / name)
    (folder / "=broken.csv").write_text("v,E (MeV)\n0,0\n1,200\n2,400\n")
    (folder / "empty.csv").write_text("")
    summary = rungs.analyze_many(folder, mc_samples=100, summary=tmp_path / "py.csv")
    assert len(summary) == 5 and len(summary.failed) == 2
    rows = {r["file"].rsplit("/", 1)[-1]: r for r in summary.rows}
    assert rows["=broken.csv"]["status"] == "failed"
    assert "column 2 ('E (MeV)')" in rows["=broken.csv"]["message"]
    ok = rows["qz2-levels.csv"]
    doc = summary.results[str(folder / "qz2-levels.csv")].to_dict()
    assert ok["d0_cm1"] == doc["recommended"]["d0_cm1"]
    assert ok["we_sigma_cm1"] == doc["constants"]["we_cm1"]["sigma"]
    assert ok["warnings"] == len(doc["warnings"])
    # The command line over the same files, named the same way, writes the same bytes.
    names = sorted(p.name for p in folder.iterdir())
    out = run_cli(
        cli, "analyze", *[str(folder / n) for n in names], "--mc", "100", "--summary",
        str(tmp_path / "cli.csv"),
    )
    assert out.returncode == 2, out.stderr
    assert (tmp_path / "py.csv").read_text() == (tmp_path / "cli.csv").read_text()
    # The formula-like file name is written as text (the CSV exports' convention).
    monkeypatch.chdir(folder)
    line = rungs.analyze_many(["=broken.csv"]).to_csv().splitlines()[1]
    assert line.startswith("'=broken.csv,failed,"), line


def test_the_readmes_python_example_runs_as_written(tmp_path, monkeypatch):
    # The example of the README's "From Python" section, run in a folder holding the files it
    # names (copies of the SYNTHETIC demo data), as a notebook would run it.
    from conftest import ROOT

    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    section = readme.split("## From Python", 1)[1]
    code = section.split("```python\n", 1)[1].split("```", 1)[0]
    shutil.copy(DEMO / "qz2-levels.csv", tmp_path / "levels.csv")
    (tmp_path / "spectra").mkdir()
    for name in ("qz2-levels.csv", "qz2-spacings.csv"):
        shutil.copy(DEMO / name, tmp_path / "spectra" / name)
    (tmp_path / "spectra" / "notes.txt").write_text("not a table\n")
    monkeypatch.chdir(tmp_path)
    scope: dict = {}
    exec(compile(code, "README.md", "exec"), scope)
    assert (tmp_path / "summary.csv").read_text().count("\n") == 4
    assert (tmp_path / "spacings.svg").read_text().lstrip().startswith("<svg")
    assert len(scope["summary"].failed) == 1
    assert scope["doc"]["format"] == "rungs-analysis"
