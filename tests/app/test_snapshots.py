"""Snapshots of the screen layouts (pytest-textual-snapshot). Deterministic:
a fixed sheet under a fixed file name, the solve awaited, no clocks shown.
Update after a deliberate layout change with ``pytest --snapshot-update``
and look at the new SVGs before committing them."""

from __future__ import annotations

from tui.app import StatepathApp

from .conftest import settle


def _app(sheet_path, environ):
    return StatepathApp(str(sheet_path), environ=environ)


async def _solved(pilot) -> None:
    await settle(pilot.app, pilot)


def test_main_screen_80x24(snap_compare, sheet_path, environ):
    assert snap_compare(_app(sheet_path, environ), terminal_size=(80, 24), run_before=_solved)


def test_main_screen_120x40(snap_compare, sheet_path, environ):
    assert snap_compare(_app(sheet_path, environ), terminal_size=(120, 40), run_before=_solved)


def test_unit_detail_80x24(snap_compare, sheet_path, environ):
    async def open_booster(pilot) -> None:
        await settle(pilot.app, pilot)
        await pilot.press("2", "down", "down", "enter")
        await settle(pilot.app, pilot)

    assert snap_compare(_app(sheet_path, environ), terminal_size=(80, 24), run_before=open_booster)


def test_chart_120x40(snap_compare, sheet_path, environ):
    async def open_chart(pilot) -> None:
        await settle(pilot.app, pilot)
        await pilot.press("c")
        await settle(pilot.app, pilot)

    assert snap_compare(_app(sheet_path, environ), terminal_size=(120, 40), run_before=open_chart)
