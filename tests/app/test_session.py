"""The editing session without the terminal: edits, undo, redo, recovery,
saving against a file changed on disk, the recent-files list."""

from __future__ import annotations

import json

import pytest

from thermo import sheetfile
from thermo.errors import FileChangedOnDisk, SheetError
from tui.session import RecentFiles, Session, find_recovery, recovery_path_beside, unified_diff


def _set_pressure(value):
    return lambda document: sheetfile.set_value(document, ("units", "choke", "outlet_pressure"), value)


def test_valid_edit_changes_only_its_line_and_marks_dirty(sheet_path, environ):
    session = Session.open(sheet_path, environ=environ)
    before = session.text
    assert not session.dirty
    assert session.apply("set", _set_pressure("30 barg"))
    assert session.dirty
    changed = [line for line in unified_diff(before, session.text, "a", "b").splitlines()
               if line[:1] in "+-" and not line.startswith(("+++", "---"))]
    assert changed == ['-outlet_pressure = "22 barg"         # downstream set point',
                       '+outlet_pressure = "30 barg"         # downstream set point']
    assert session.loaded.sheet.units["choke"].params["outlet_pressure"] == pytest.approx(30e5 + 101325.0)


def test_invalid_edit_is_refused_and_changes_nothing(sheet_path, environ):
    session = Session.open(sheet_path, environ=environ)
    before = session.text
    with pytest.raises(SheetError) as caught:
        session.apply("set", _set_pressure("22 furlongs"))
    assert "outlet_pressure" in str(caught.value)
    assert session.text == before and not session.dirty and not session.can_undo
    assert not recovery_path_beside(sheet_path).exists()


def test_undo_and_redo_step_between_accepted_texts(sheet_path, environ):
    session = Session.open(sheet_path, environ=environ)
    original = session.text
    session.apply("first", _set_pressure("30 barg"))
    second_text = session.text
    session.apply("second", _set_pressure("31 barg"))
    assert session.undo() == "second" and session.text == second_text
    assert session.undo() == "first" and session.text == original
    assert not session.dirty and session.undo() is None
    assert session.redo() == "first" and session.text == second_text
    session.apply("branch", _set_pressure("35 barg"))
    assert not session.can_redo


def test_recovery_written_on_edit_offered_and_removed_on_save(sheet_path, environ):
    session = Session.open(sheet_path, environ=environ)
    session.apply("edit", _set_pressure("30 barg"))
    recovery_file = recovery_path_beside(sheet_path)
    assert recovery_file.exists()
    assert json.loads(recovery_file.read_text())["text"] == session.text
    found = find_recovery(sheet_path, sheet_path.read_text(), environ)
    assert found is not None and found.text == session.text and not found.disk_changed_since
    assert '+outlet_pressure = "30 barg"' in found.diff_against(sheet_path.read_text())
    later = Session.open(sheet_path, environ=environ)
    assert later.restore(found) and later.text == session.text and later.dirty
    session.save()
    assert not recovery_file.exists()
    assert find_recovery(sheet_path, sheet_path.read_text(), environ) is None


def test_undo_back_to_the_file_removes_the_recovery(sheet_path, environ):
    session = Session.open(sheet_path, environ=environ)
    session.apply("edit", _set_pressure("30 barg"))
    session.undo()
    assert not recovery_path_beside(sheet_path).exists()


def test_save_refuses_a_file_changed_on_disk_until_told_to_overwrite(sheet_path, environ):
    session = Session.open(sheet_path, environ=environ)
    session.apply("edit", _set_pressure("30 barg"))
    someone_else = sheet_path.read_text().replace("Test let-down", "Changed elsewhere")
    sheet_path.write_text(someone_else)
    assert session.changed_on_disk()
    with pytest.raises(FileChangedOnDisk):
        session.save()
    assert sheet_path.read_text() == someone_else
    assert "Changed elsewhere" in session.diff_with_disk()
    session.save(overwrite=True)
    assert sheet_path.read_text() == session.text and not session.dirty


def test_reload_keeps_the_edited_text_one_undo_away(sheet_path, environ):
    session = Session.open(sheet_path, environ=environ)
    session.apply("edit", _set_pressure("30 barg"))
    edited = session.text
    sheet_path.write_text(sheet_path.read_text().replace('"35 degC"', '"36 degC"'))
    assert session.reload()
    assert '"36 degC"' in session.text and not session.dirty
    assert session.undo() == "reload from disk" and session.text == edited


def test_reload_of_a_broken_file_changes_nothing(sheet_path, environ):
    session = Session.open(sheet_path, environ=environ)
    before = session.text
    sheet_path.write_text(before.replace('"68 barg"', '"68"'))
    with pytest.raises(SheetError):
        session.reload()
    assert session.text == before


def test_recent_files_newest_first_in_the_xdg_config_dir(tmp_path, environ):
    from tui.session import config_dir

    directory = config_dir(environ)
    assert str(directory).startswith(environ["XDG_CONFIG_HOME"])
    recent = RecentFiles(directory, limit=3)
    files = []
    for index in range(4):
        path = tmp_path / f"s{index}.toml"
        path.write_text("")
        files.append(str(path.resolve()))
        recent.add(path)
    recent.add(files[1])
    assert recent.load() == [files[1], files[3], files[2]]
    (tmp_path / "s3.toml").unlink()
    assert recent.existing() == [files[1], files[2]]
    assert (directory / "recent.json").exists()
