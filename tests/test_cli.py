"""The command line over a small index: pattern sources, formats, exit statuses."""
from __future__ import annotations

import json

import nltk
import pytest
from click.testing import CliRunner

from treequery.cli import main

TREES = """( (S (NP-SBJ (DT The) (NN crane)) (VP (VBD lifted) (NP (DT the) (NN crate))
  (PP-CLR (IN onto) (NP (DT the) (NN quay)))) (. .)) )
( (S (NP-SBJ (PRP It)) (VP (VBD rained)) (. .)) )
"""


@pytest.fixture()
def db(tmp_path):
    source = tmp_path / "tiny.mrg"
    source.write_text(TREES, encoding="utf-8")
    path = tmp_path / "tiny.db"
    result = CliRunner().invoke(main, ["index", "--quiet", "--db", str(path), str(source)])
    assert result.exit_code == 0, result.output
    return str(path)


def invoke(*args, input=None):
    return CliRunner().invoke(main, list(args), input=input)


def test_count_json_has_the_documented_keys_and_agrees_with_nltk(db):
    result = invoke("count", "--db", db, "--format", "json", "np:NP")
    assert result.exit_code == 0, result.output
    counted = json.loads(result.output)
    assert {"results", "trees", "groups"} <= counted.keys()
    # Independent count: NLTK's reading of the same text (nltk.Tree as reference).
    trees = [nltk.Tree.fromstring(t) for t in TREES.replace("\n  ", " ").strip().split("\n")]
    expected = sum(1 for t in trees for s in t.subtrees() if s.label().split("-")[0] == "NP")
    assert counted["results"] == expected


def test_count_by_groups_are_keyed_by_attribute(db):
    result = invoke("count", "--db", db, "--format", "json", "--by", "n.word", "n:NN")
    groups = {tuple(g["key"]): g["results"] for g in json.loads(result.output)["groups"]}
    assert groups == {("crane",): 1, ("crate",): 1, ("quay",): 1}


def test_find_json_lists_location_and_bound_nodes(db):
    result = invoke("find", "--db", db, "--format", "json", "v:VBD just-before o:NP")
    rows = [json.loads(line) for line in result.output.splitlines()]
    assert len(rows) == 1
    assert rows[0]["line"] == 1 and rows[0]["file"].endswith("tiny.mrg")
    assert rows[0]["nodes"]["o"]["words"] == "the crate"
    assert rows[0]["nodes"]["v"]["label"] == "VBD"


def test_pattern_from_file_and_from_stdin(db, tmp_path):
    pattern = tmp_path / "p.tq"
    pattern.write_text("# comment line\nvp:VP {\n  parent-of PP-CLR\n}\n", encoding="utf-8")
    from_file = invoke("count", "--db", db, "-f", str(pattern))
    from_stdin = invoke("count", "--db", db, input=pattern.read_text())
    assert from_file.exit_code == from_stdin.exit_code == 0
    assert from_file.output == from_stdin.output == "1 result in 1 tree\n"


def test_bad_pattern_exits_2_with_a_caret(db):
    result = invoke("count", "--db", db, "VP << NP")
    assert result.exit_code == 2
    assert "^" in result.output and "VP << NP" in result.output


def test_other_failures_exit_1(db):
    result = invoke("count", "--db", db, "--by", "nosuch.word", "n:NN")
    assert result.exit_code == 1
    assert "not a result variable" in result.output


def test_explain_shows_ast_sql_parameters_and_sqlite_plan(db):
    result = invoke("explain", "--db", db, 'v:VBD "lifted"')
    assert result.exit_code == 0
    for part in ("pattern:", "SQL:", "parameters:", "SQLite query plan:"):
        assert part in result.output
    sql = result.output.split("SQL:")[1].split("parameters:")[0]
    assert "lifted" not in sql  # user text only ever travels as a parameter


def test_show_prints_the_tree_as_in_the_file(db):
    result = invoke("show", "--db", db, "--flat", "2")
    assert result.exit_code == 0
    location, brackets = result.output.strip().split("\n")
    assert location.endswith("tiny.mrg:3")  # the second tree starts on line 3
    original = TREES.strip().split("\n")[2]
    assert nltk.Tree.fromstring(brackets) == nltk.Tree.fromstring(original)
