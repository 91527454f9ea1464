"""Rules files: every expectation kind, every exit status, errors with their positions."""
from __future__ import annotations

import json
from pathlib import Path

import nltk
import pytest
from click.testing import CliRunner

from treequery.checks.rules import RulesFileError, parse_rules
from treequery.cli_checks import check

from .helpers import build_index

# Invented sentences, one tree per line. Counts used below, by hand: 3 NP-SBJ (one per
# tree), 1 VP with an NP child (tree 2), 3 VPs of which 2 (trees 1, 3) have no NP child.
TREES = [
    "( (S (NP-SBJ (DT The) (NN cat)) (VP (VBD slept)) (. .)) )",
    "( (S (NP-SBJ (PRP It)) (VP (VBD chased) (NP (DT a) (NN mouse))) (. .)) )",
    "( (S (NP-SBJ (NNS Mice)) (VP (VBP run)) (. .)) )",
]


@pytest.fixture(scope="module")
def db(tmp_path_factory) -> Path:
    return build_index(tmp_path_factory.mktemp("rules"), {"r.mrg": TREES})


def rule(name: str, expectation: str, message: str = "a message") -> str:
    return f"rule {name}\n    message: {message}\n    {expectation}\n"


def run(db: Path, tmp_path: Path, text: str, *options: str):
    rules_file = tmp_path / "test.rules"
    rules_file.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(check, ["rules", str(rules_file), "--db", str(db), *options])
    return result, str(rules_file)


def outcome(db: Path, tmp_path: Path, text: str) -> dict:
    result, _ = run(db, tmp_path, text, "--format", "json")
    assert result.exit_code in (0, 1), result.output
    document = json.loads(result.stdout)
    assert document["passed"] == (result.exit_code == 0)
    return document


@pytest.mark.parametrize(("expectation", "passed", "matches", "violations"), [
    ("never: PP", True, 0, 0),
    ("never: VP parent-of NP", False, 1, 1),
    ("at most 1: VP parent-of NP", True, 1, 0),
    ("at most 0: VP parent-of NP", False, 1, 1),
    ("at least 3: NP-SBJ", True, 3, 0),
    ("at least 4: NP-SBJ", False, 3, 0),   # too few: a count, nothing to point at
    ("exactly 3: NP-SBJ", True, 3, 0),
    ("exactly 2: NP-SBJ", False, 3, 3),
    ("every: s:S\n    satisfies: s parent-of NP-SBJ", True, 0, 0),
    ("every: vp:VP\n    satisfies: vp parent-of NP", False, 2, 2),
])
def test_each_expectation_kind(db, tmp_path, expectation, passed, matches, violations):
    document = outcome(db, tmp_path, rule("r", expectation))
    (only,) = document["rules"]
    assert (only["passed"], only["matches"], len(only["violations"])) == (
        passed, matches, violations)


def test_every_reports_the_instances_that_fail(db, tmp_path):
    document = outcome(db, tmp_path, rule("r", "every:\n        vp:VP\n"
                                                "    satisfies:\n        vp parent-of NP"))
    violations = document["rules"][0]["violations"]
    assert [(v["ordinal"], v["line"]) for v in violations] == [(1, 1), (3, 3)]
    assert [[(n["var"], n["words"]) for n in v["nodes"]] for v in violations] == [
        [("vp", "slept")], [("vp", "run")]]


def test_violation_tree_marks_the_bound_nodes(db, tmp_path):
    document = outcome(db, tmp_path, rule("r", "never: vp:VP parent-of o:NP"))
    (violation,) = document["rules"][0]["violations"]
    assert violation["document"] == "r.mrg" and violation["line"] == 2
    marked = nltk.Tree.fromstring(violation["tree"])
    original = nltk.Tree.fromstring(TREES[1])
    # The marked tree is the original tree (read by NLTK) with "name:" before two labels.
    named = {pos: marked[pos].label() for pos in marked.treepositions()
             if isinstance(marked[pos], nltk.Tree) and ":" in marked[pos].label()}
    assert {original[pos].label(): label for pos, label in named.items()} == {
        "VP": "vp:VP", "NP": "o:NP"}
    for pos, label in named.items():
        marked[pos].set_label(label.split(":", 1)[1])
    assert marked == original


def test_exit_status_0_when_every_rule_holds(db, tmp_path):
    result, _ = run(db, tmp_path, rule("a", "never: PP") + "\n" + rule("b", "at least 1: VP"))
    assert result.exit_code == 0
    assert "PASS  a" in result.stdout and "PASS  b" in result.stdout
    assert "2 rules, 0 failed" in result.stdout


def test_exit_status_1_when_any_rule_fails(db, tmp_path):
    result, _ = run(db, tmp_path, rule("a", "never: PP") + "\n"
                    + rule("b", "never: VP parent-of NP", "No objects here."))
    assert result.exit_code == 1
    assert "FAIL  b" in result.stdout and "No objects here." in result.stdout
    assert "r.mrg:2  tree" in result.stdout
    assert "2 rules, 1 failed" in result.stdout


def test_text_output_options(db, tmp_path):
    text = rule("b", "never: v:VP parent-of NP")
    flat, _ = run(db, tmp_path, text, "--flat")
    assert "(v:VP (VBD chased) (NP (DT a) (NN mouse)))" in flat.stdout
    bare, _ = run(db, tmp_path, text, "--no-trees")
    assert "(v:VP" not in bare.stdout and bare.exit_code == 1


def test_exit_status_2_for_a_malformed_file_with_its_position(db, tmp_path):
    result, path = run(db, tmp_path, rule("a", "never: PP") + "rule b\n    mesage: x\n")
    assert result.exit_code == 2
    # Lines: 1-3 rule a, 4 "rule b", 5 "    mesage: x" (the field name starts in column 5).
    assert f"{path}:5:5:" in result.stderr


def test_exit_status_2_for_a_bad_pattern_before_any_rule_runs(db, tmp_path):
    # The first rule would fail (exit 1); the bad pattern of the second wins.
    text = rule("a", "never: VP") + rule("b", "never: VP parnt-of NP")
    result, path = run(db, tmp_path, text)
    assert result.exit_code == 2
    # Line 6 is "    never: VP parnt-of NP"; "parnt" starts in column 15.
    assert f"{path}:6:15: syntax error" in result.stderr
    assert "FAIL" not in result.stdout


def test_exit_status_2_for_a_missing_file(db, tmp_path):
    result = CliRunner().invoke(check, ["rules", str(tmp_path / "absent.rules"),
                                        "--db", str(db)])
    assert result.exit_code == 2


def position(text: str) -> tuple[int, int]:
    with pytest.raises(RulesFileError) as caught:
        parse_rules(text, "x.rules")
    return caught.value.line, caught.value.column


# Each malformed file with the (line, column) of its problem, worked out by hand.
MALFORMED = [
    ("", (1, 1)),                                              # no rule at all
    ("    rule a\n", (1, 5)),                                  # indented rule line
    ("regel a\n", (1, 1)),                                     # not 'rule'
    ("rule\n", (1, 5)),                                        # no name
    ("rule a  # note\n", (1, 9)),                              # more than a name
    ("rule 9a\n    message: m\n    never: VP\n", (1, 6)),     # bad name
    (rule("a", "never: VP") + rule("a", "never: NP"), (4, 6)),  # name used twice
    ("rule a\n    mesage: m\n    never: VP\n", (2, 5)),       # unknown field
    ("rule a\n    message: m\n", (1, 1)),                     # no expectation
    ("rule a\n    never: VP\n", (1, 1)),                      # no message
    ("rule a\n    message:\n    never: VP\n", (2, 13)),       # empty message
    ("rule a\n    message: m\n    never: VP\n    at most 1: NP\n", (4, 5)),  # two
    ("rule a\n    message: m\n    never: VP\n    never: NP\n", (4, 5)),      # field twice
    ("rule a\n    message: m\n    at most many: VP\n", (3, 13)),  # not a number
    ("rule a\n    message: m\n    at least: VP\n", (3, 14)),      # no number
    ("rule a\n    message: m\n    never 3: VP\n", (3, 11)),       # number not allowed
    ("rule a\n    message: m\n    never:\n", (3, 11)),            # no pattern
    ("rule a\n    message: m\n    every: VP\n", (3, 5)),          # every without satisfies
    ("rule a\n    message: m\n    never: VP\n    satisfies: NP\n", (4, 5)),  # without every
    ("rule a\n    message: m\n    never:\n        vp:VP\n        vp.colour = 1\n",
     (5, 12)),                                                    # pattern error in a block
    ("rule a\n    message: m\n    every: s:S\n    satisfies:\n        s parent-of zz\n",
     (5, 21)),                                                    # error inside satisfies
]


@pytest.mark.parametrize(("text", "where"), MALFORMED)
def test_malformed_files_are_located(text, where):
    assert position(text) == where


def test_a_well_formed_file(tmp_path):
    text = ("# comment\n\nrule first-one\n    message: one\n        and two\n"
            "    at most 2:\n        # a comment inside the pattern\n        vp:VP\n\n"
            "        vp parent-of NP\n\nrule second\n    message: m\n    exactly 0: PP\n")
    parsed = parse_rules(text, "x.rules")
    assert [(r.name, r.line, r.message, r.expect, r.limit) for r in parsed.rules] == [
        ("first-one", 3, "one and two", "at most", 2),
        ("second", 12, "m", "exactly", 0),
    ]
    assert parsed.rules[0].pattern.result_vars == ("vp",)
