"""Shared set-up of the app tests: a copy of the test sheet in a temporary
folder and config/state folders of their own (never the user's)."""

from __future__ import annotations

import asyncio
import shutil
from pathlib import Path

import pytest

SHEETS = Path(__file__).parent / "sheets"


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
