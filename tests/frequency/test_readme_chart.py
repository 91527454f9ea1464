"""The chart shown in the README is what the command written beside it draws today."""
from __future__ import annotations

import shlex

from click.testing import CliRunner
from conftest import REPO_ROOT

from treequery.cli import main

CHART = REPO_ROOT / "demo_treebank" / "figures" / "compare_genres.svg"


def test_readme_chart_is_current(demo_db, tmp_path):
    readme = (REPO_ROOT / "README.md").read_text(encoding="utf-8")
    line = next(line for line in readme.splitlines()
                if line.startswith("treequery compare") and "--chart" in line)
    words = shlex.split(line)[1:]
    target = tmp_path / "chart.svg"
    words[words.index("--chart") + 1] = str(target)
    result = CliRunner().invoke(main, [*words, "--db", str(demo_db)])
    assert result.exit_code == 0, result.output
    assert "![" in readme and str(CHART.relative_to(REPO_ROOT)) in readme
    assert target.read_text(encoding="utf-8") == CHART.read_text(encoding="utf-8"), (
        f"{CHART} is out of date: run `{line}` from the repository root")
