"""Shared set-up of the app tests: a copy of the test sheet in a temporary
folder, config/state folders of their own (never the user's), and the app
opened on the sheet with its first solve done (``open_app``, ``run_solved``)."""

from __future__ import annotations

import asyncio
import shutil
from contextlib import asynccontextmanager
from pathlib import Path

import pytest

SHEETS = Path(__file__).parent / "sheets"
SIZE = (120, 40)


@pytest.fixture
def environ(tmp_path, monkeypatch) -> dict:
    env = {
        "XDG_CONFIG_HOME": str(tmp_path / "config"),
        "XDG_STATE_HOME": str(tmp_path / "state"),
        "HOME": str(tmp_path / "home"),
    }
    for key, value in env.items():
        monkeypatch.setenv(key, value)
    return env


@pytest.fixture
def sheet_path(tmp_path) -> Path:
    folder = tmp_path / "work"
    folder.mkdir()
    target = folder / "letdown.toml"
    shutil.copyfile(SHEETS / "letdown.toml", target)
    return target


async def settle(app, pilot) -> None:
    """Wait until no solve (or dome) is running and the screen has caught up."""
    for _ in range(200):
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        if not app.solve_running:
            return
    raise AssertionError("the solve did not finish")


def run(coroutine) -> None:
    asyncio.run(coroutine)


@asynccontextmanager
async def open_app(path, environ: dict, size: tuple[int, int] = SIZE):
    """The app on the sheet at ``path``, driven headless at ``size``: yields
    ``(app, pilot)`` once the first solve is done."""
    from tui.app import StatepathApp

    app = StatepathApp(str(path), environ=environ)
    async with app.run_test(size=size) as pilot:
        await settle(app, pilot)
        yield app, pilot


@pytest.fixture
def run_solved(sheet_path, environ):
    """``run_solved(scenario, size=SIZE)`` runs ``await scenario(app, pilot)``
    in the app opened on the test sheet once its first solve is done, and
    returns the app after it has stopped."""

    def drive(scenario, size: tuple[int, int] = SIZE):
        async def main():
            async with open_app(sheet_path, environ, size) as (app, pilot):
                await scenario(app, pilot)
            return app

        return asyncio.run(main())

    return drive
