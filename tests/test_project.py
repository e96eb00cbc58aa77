"""The project's promises to a new user: the README's commands are what CI runs."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def _readme_commands() -> list[str]:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    quick = text.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    return [block.strip() for block in re.findall(r"```\n(.*?)```", quick, flags=re.S)]


def test_readme_gives_two_commands_and_ci_runs_the_test_one_verbatim():
    commands = _readme_commands()
    assert len(commands) == 2
    run_demo, run_tests = commands
    assert "demo_lightcurves" in run_demo and "pytest" in run_tests
    ci_lines = [line.strip() for line in (ROOT / ".ci" / "run").read_text().splitlines()]
    assert run_tests in ci_lines


def test_top_level_layout():
    for name in ("README.md", "DEVELOPERS.md", "pyproject.toml", "seismo", "tests",
                 "demo_lightcurves", "docs", "LICENSE"):
        assert (ROOT / name).exists(), name
