"""Golden output of every view on the demo treebank (colour off), frozen after review by eye.

Regenerate after an intended change with `TREEQUERY_UPDATE_GOLDEN=1 pytest tests/results`,
then read the diff before committing it. The structural facts behind these views are
checked independently (NLTK) in the other files of this folder.
"""
from __future__ import annotations

import os

import pytest

from results.helpers import REPO_ROOT, cli

GOLDEN = REPO_ROOT / "tests" / "results" / "golden"
UPDATE = bool(os.environ.get("TREEQUERY_UPDATE_GOLDEN"))
P = "vp:VP parent-of o:NP"

CASES = {
    "find_text": ["find", P, "--limit", "3"],
    "find_kwic": ["find", P, "--format", "kwic", "--limit", "6"],
    "find_kwic_var_width": ["find", P, "--format", "kwic", "--kwic-var", "o", "--width", "20",
                            "--limit", "6"],
    "find_kwic_unnamed": ["find", 'VBD "moored"', "--format", "kwic"],
    "find_brackets": ["find", P, "--format", "brackets", "--limit", "2"],
    "find_brackets_whole": ["find", P, "--format", "brackets", "--whole", "--limit", "1",
                            "--offset", "2"],
    "find_brackets_two_places": ["find", "a:MD just-before b:RB", "--format", "brackets",
                                 "--limit", "2"],
    "find_tree": ["find", P, "--format", "tree", "--limit", "2"],
    "find_tree_whole": ["find", P, "--format", "tree", "--whole", "--limit", "1", "--offset", "2"],
    "find_json": ["find", P, "--format", "json", "--limit", "3"],
    "find_csv": ["find", P, "--format", "csv", "--limit", "3"],
    "find_tsv": ["find", P, "--format", "tsv", "--limit", "3"],
    "find_treebank": ["find", P, "--format", "treebank", "--limit", "3"],
    "find_sample": ["find", P, "--sample", "4", "--seed", "11"],
    "find_sort": ["find", P, "--format", "kwic", "--sort", "-o.tokens", "--limit", "4"],
    "show_brackets": ["show", "5"],
    "show_flat": ["show", "5", "--flat"],
    "show_tree_at": ["show", "--at", "board_minutes.mrg:50", "--format", "tree"],
    "show_svg": ["show", "6", "--format", "svg"],
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_golden_output(name, demo_db, monkeypatch):
    monkeypatch.chdir(REPO_ROOT)  # paths print relative to the working folder
    output = cli(*CASES[name], "--db", str(demo_db), "--color", "never")
    expected_file = GOLDEN / f"{name}.txt"
    if UPDATE:
        expected_file.write_text(output, encoding="utf-8")
    assert output == expected_file.read_text(encoding="utf-8")


def test_draw_writes_the_golden_svg(demo_db, monkeypatch, tmp_path):
    monkeypatch.chdir(REPO_ROOT)
    listing = cli("draw", P, "--db", str(demo_db), "--out", str(tmp_path), "--limit", "2",
                  "--offset", "1")
    files = sorted(tmp_path.glob("*.svg"))
    assert [f.name for f in files] == ["0001-tree5.svg", "0002-tree6.svg"]
    assert "demo_treebank/board_minutes.mrg:46  tree 5" in listing
    expected_file = GOLDEN / "draw_0001-tree5.svg"
    if UPDATE:
        expected_file.write_text(files[0].read_text(encoding="utf-8"), encoding="utf-8")
    assert files[0].read_text(encoding="utf-8") == expected_file.read_text(encoding="utf-8")
