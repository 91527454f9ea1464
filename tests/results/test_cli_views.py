"""Looking trees up by file and line, colour switches, streaming and Ctrl-C."""
from __future__ import annotations

import os
import signal
import subprocess
import sys

import pytest
from click.testing import CliRunner

from results.helpers import REPO_ROOT, cli, file_lines, nltk_tree_at
from treequery import Treebank
from treequery.cli import main
from treequery.errors import TreequeryError


def spans(path) -> list[tuple[int, int]]:
    """(first, last) line of every tree in a file, by counting brackets (common practice)."""
    found, depth, start = [], 0, None
    for number, text in enumerate(file_lines(str(path)), 1):
        if depth == 0 and text.lstrip().startswith("("):
            start = number
        depth += text.count("(") - text.count(")")
        if depth == 0 and start is not None:
            found.append((start, number))
            start = None
    return found


def test_every_line_inside_a_tree_finds_that_tree(demo_db, demo_dir):
    path = demo_dir / "board_minutes.mrg"
    with Treebank(demo_db, readonly=True) as bank:
        for first, last in spans(path):
            ids = {bank.tree_at(str(path), line) for line in range(first, last + 1)}
            assert len(ids) == 1
            tree_id = ids.pop()
            assert bank.tree_location(tree_id)["line"] == first
            assert nltk_tree_at(path, first).leaves() == \
                [leaf.word for leaf in bank.tree(tree_id).leaves()]


def test_lines_between_trees_and_unknown_files_are_errors(demo_db, demo_dir):
    path = demo_dir / "board_minutes.mrg"
    (first, last), _ = spans(path)[:2]
    with Treebank(demo_db, readonly=True) as bank:
        with pytest.raises(TreequeryError, match="not inside a tree"):
            bank.tree_at(str(path), last + 1)  # the blank line after the first tree
        with pytest.raises(TreequeryError, match="no indexed file"):
            bank.tree_at("no_such_file.mrg", 3)


@pytest.mark.parametrize("given", ["board_minutes.mrg", "demo_treebank/board_minutes.mrg",
                                   "./demo_treebank/board_minutes.mrg", "ABSOLUTE"])
def test_show_at_accepts_relative_suffix_and_absolute_paths(demo_db, monkeypatch, given):
    monkeypatch.chdir(REPO_ROOT)
    if given == "ABSOLUTE":
        given = str(REPO_ROOT / "demo_treebank" / "board_minutes.mrg")
    output = cli("show", "--db", str(demo_db), "--at", f"{given}:50")
    assert output.splitlines()[0] == "# tree 5  demo_treebank/board_minutes.mrg:46"


def test_show_needs_exactly_one_way_to_name_the_tree(demo_db):
    result = CliRunner().invoke(main, ["show", "--db", str(demo_db)])
    assert result.exit_code == 2 and "tree number or --at" in result.output


def test_colour_always_never_and_no_color(demo_db):
    args = ["find", "--db", str(demo_db), "vp:VP parent-of o:NP", "--limit", "2",
            "--format", "brackets"]
    assert "\x1b[" in cli(*args, "--color", "always")
    assert "\x1b[" not in cli(*args, "--color", "never")
    # NO_COLOR (no-color.org): any non-empty value turns colour off in auto mode.
    assert "\x1b[" not in cli(*args, env={"NO_COLOR": "1"})


def test_colour_does_not_change_the_text(demo_db):
    import click

    args = ["find", "--db", str(demo_db), "vp:VP parent-of o:NP", "--limit", "3"]
    for fmt in ("kwic", "brackets", "tree", "text"):
        plain = cli(*args, "--format", fmt, "--color", "never")
        painted = cli(*args, "--format", fmt, "--color", "always")
        assert click.unstyle(painted) == plain


@pytest.mark.skipif(os.name == "nt", reason="SIGINT delivery differs on Windows")
def test_results_stream_and_ctrl_c_stops_cleanly(wsj_db):
    """The first line arrives while the search still runs; SIGINT then ends it with 130."""
    slow = "a:* precedes b:*\nb precedes c:*"  # billions of triples on the WSJ sample
    process = subprocess.Popen(
        [sys.executable, "-m", "treequery.cli", "find", "--db", str(wsj_db), slow,
         "--format", "kwic"], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
        cwd=REPO_ROOT, env={**os.environ, "PYTHONPATH": str(REPO_ROOT)})
    first = process.stdout.readline()
    assert " | " in first  # a concordance line, printed before the search ended
    process.send_signal(signal.SIGINT)
    _, err = process.communicate(timeout=60)
    assert process.returncode == 130
    assert "Traceback" not in err and "interrupted" in err
