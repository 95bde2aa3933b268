"""Nothing lost: --output writes atomically and never replaces a file sqlstat did not write without --force."""

from __future__ import annotations

import os
import stat

import pytest
from typer.testing import CliRunner

from sqlstat import files
from sqlstat.cli import app
from sqlstat.errors import UsageError
from sqlstat.files import write_atomic

from .conftest import PROJECT

DEMO = PROJECT / "sample_data" / "return_reminders.toml"


def _leftovers(folder):
    return [p.name for p in folder.iterdir() if p.name.endswith(".tmp")]


def test_new_file_is_written_whole_with_ordinary_permissions(tmp_path):
    out = write_atomic(tmp_path / "q.sql", "SELECT 1\n", kind="sql")
    assert out.read_text() == "SELECT 1\n" and not _leftovers(tmp_path)
    assert stat.S_IMODE(out.stat().st_mode) & 0o044  # readable by others as umask allows, not mkstemp's 0600


def test_replacing_keeps_the_old_files_permissions(tmp_path):
    old = tmp_path / "q.sql"
    old.write_text('WITH "assigned_units" AS (SELECT 1)')
    old.chmod(0o640)
    write_atomic(old, "new", kind="sql")
    assert old.read_text() == "new" and stat.S_IMODE(old.stat().st_mode) == 0o640


@pytest.mark.parametrize("failing", ["fsync", "replace"])
@pytest.mark.parametrize("error", [KeyboardInterrupt, OSError])
def test_an_interrupted_write_leaves_the_old_file_intact(tmp_path, monkeypatch, failing, error):
    old = tmp_path / "report.txt"
    old.write_text("Experiment: the old report")

    def boom(*args, **kwargs):
        raise error(28, "No space left on device") if error is OSError else error()

    monkeypatch.setattr(files.os, failing, boom)
    expected = UsageError if error is OSError else KeyboardInterrupt
    with pytest.raises(expected):
        write_atomic(old, "x" * 100_000, kind="table")
    assert old.read_text() == "Experiment: the old report"
    assert not _leftovers(tmp_path)


def test_another_kind_needs_force(tmp_path):
    spec = tmp_path / "keep.toml"
    spec.write_text("precious")
    with pytest.raises(UsageError, match="--force"):
        write_atomic(spec, "SELECT 1", kind="sql")
    assert spec.read_text() == "precious"
    write_atomic(spec, "SELECT 1", kind="sql", force=True)
    assert spec.read_text() == "SELECT 1"


def test_folders_devices_and_missing_parents_are_refused_even_with_force(tmp_path):
    (tmp_path / "out.sql").mkdir()
    for target in (tmp_path / "out.sql", "/dev/null", tmp_path / "no" / "such" / "q.sql"):
        with pytest.raises(UsageError):
            write_atomic(target, "SELECT 1", kind="sql", force=True)
    assert (tmp_path / "out.sql").is_dir() and not _leftovers(tmp_path)


def test_symlink_is_written_through_and_kept(tmp_path):
    real = tmp_path / "shared.sql"
    real.write_text('WITH "assigned_units" AS (SELECT 1)')
    link = tmp_path / "latest.sql"
    link.symlink_to(real)
    write_atomic(link, "new", kind="sql")
    assert link.is_symlink() and real.read_text() == "new"


def test_symlink_to_another_kind_is_refused(tmp_path):
    spec = tmp_path / "spec.toml"
    spec.write_text("precious")
    link = tmp_path / "out.sql"
    link.symlink_to(spec)
    with pytest.raises(UsageError, match="--force"):
        write_atomic(link, "SELECT 1", kind="sql")
    assert spec.read_text() == "precious" and link.is_symlink()


def test_dangling_symlink_is_refused(tmp_path):
    link = tmp_path / "out.sql"
    link.symlink_to(tmp_path / "elsewhere" / "x.sql")
    with pytest.raises(UsageError, match="does not exist"):
        write_atomic(link, "SELECT 1", kind="sql", force=True)
    assert not (tmp_path / "elsewhere").exists()


def test_cli_output_refusals_exit_2_without_traceback(tmp_path):
    runner = CliRunner()
    spec_copy = tmp_path / "spec.toml"
    spec_copy.write_text("precious")
    (tmp_path / "dir.txt").mkdir()
    for args in (["sql", DEMO, "-o", spec_copy], ["run", DEMO, "-o", spec_copy], ["run", DEMO, "-o", tmp_path / "dir.txt"]):
        res = runner.invoke(app, [str(a) for a in args])
        assert res.exit_code == 2 and res.output.startswith("Error: ") and "Traceback" not in res.output
    assert spec_copy.read_text() == "precious"
    res = runner.invoke(app, ["run", str(DEMO), "-f", "json", "-o", str(tmp_path / "r.json")])
    assert res.exit_code == 0 and (tmp_path / "r.json").read_text().startswith("{")
    assert sorted(os.listdir(tmp_path)) == ["dir.txt", "r.json", "spec.toml"]


# A nightly job writes the same path every night, whatever its name; an unrelated file is
# never replaced without --force. Each case runs the real command twice in a row.
@pytest.mark.parametrize("args, name", [
    (["run", "-f", "json"], "latest"),
    (["run", "-f", "csv"], "latest.txt"),
    (["run"], "report"),
    (["sql"], "q.txt"),
    (["sql", "--readout", "--as-view", "v", "-d", "postgres"], "view"),
])
def test_the_same_command_twice_replaces_its_own_file_whatever_its_name(tmp_path, args, name):
    from .test_cli import DEMO

    runner = CliRunner()
    out = tmp_path / name
    spec = str(DEMO) if args[0] == "run" or "-d" not in args else str(_table_spec(tmp_path))
    for night in (1, 2):
        res = runner.invoke(app, [args[0], spec, *args[1:], "-o", str(out)])
        assert res.exit_code == 0, (night, res.output)
    assert out.read_text() == runner.invoke(app, [args[0], spec, *args[1:]]).stdout or args[0] == "run"


def _table_spec(folder):
    from .conftest import spec_text

    path = folder / "tables.toml"
    path.write_text(spec_text('name = "n"\nkind = "mean"\nvalue = "count(*)"', assignment_source="s.a",
                              events_source="s.e"))
    return path


@pytest.mark.parametrize("args", [["run"], ["run", "-f", "json"], ["run", "-f", "csv"], ["sql"]])
@pytest.mark.parametrize("name", ["notes.txt", "notes.json", "notes.csv", "notes.sql", "notes"])
def test_an_unrelated_file_is_not_replaced_without_force(tmp_path, args, name):
    from .test_cli import DEMO

    runner = CliRunner()
    notes = tmp_path / name
    notes.write_text("my own notes, not sqlstat's\n")
    res = runner.invoke(app, [args[0], str(DEMO), *args[1:], "-o", str(notes)])
    assert res.exit_code == 2 and "--force" in res.output, res.output
    assert notes.read_text() == "my own notes, not sqlstat's\n"
    assert runner.invoke(app, [args[0], str(DEMO), *args[1:], "-o", str(notes), "--force"]).exit_code == 0
    assert notes.read_text() != "my own notes, not sqlstat's\n"


def test_every_output_form_begins_with_its_signature(tmp_path):
    import sqlstat
    from sqlstat import report
    from sqlstat.files import SIGNATURES

    from .test_cli import DEMO

    analysis = sqlstat.run(DEMO)
    for kind in ("json", "csv", "table"):
        assert SIGNATURES[kind].match(report.render(analysis, kind)), kind
    spec = sqlstat.load_spec(_table_spec(tmp_path))
    for name, d in sqlstat.DIALECTS.items():
        for kw in ({}, {"readout": True}, {"view": "s.v"}, {"view": "v", "readout": True}):
            assert SIGNATURES["sql"].match(sqlstat.sql(spec, name, **kw)), (name, kw)
