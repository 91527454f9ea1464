"""The planted inconsistencies of the demo treebank (demo_treebank/README.md) are found."""
from __future__ import annotations

import json

from click.testing import CliRunner

from treequery.checks.model import NIL
from treequery.checks.tags import find_tag_variation
from treequery.checks.variation import find_variation_nuclei
from treequery.cli_checks import check
from treequery.index.schema import connect


def odd_ones(variation, label):
    return [(o.document, o.ordinal) for o in variation.occurrences if o.label == label]


def test_planted_variation_nuclei(demo_db):
    conn = connect(str(demo_db), readonly=True)
    try:
        found = {v.words: v for v in find_variation_nuclei(conn)}
    finally:
        conn.close()
    # demo_treebank/README.md, "Planted inconsistencies", variation nuclei 1-3.
    assert odd_ones(found["the harbour office"], NIL) == [("board_minutes.mrg", 22)]
    assert odd_ones(found["next morning"], "ADVP") == [("night_of_the_lemons.mrg", 21)]
    assert odd_ones(found["the old slipway"], "ADJP") == [("help_desk.mrg", 14)]
    morning = found["next morning"]
    assert (morning.context_left, morning.context_right) == (1, 1)  # sailed ... with
    assert morning.context_text == "sailed [next morning] with"


def test_planted_tag_variations_are_exactly_the_non_fringe_ones(demo_db):
    conn = connect(str(demo_db), readonly=True)
    try:
        found = find_tag_variation(conn, non_fringe=True, min_context=2)
    finally:
        conn.close()
    by_word = {v.words: v for v in found}
    # demo_treebank/README.md, "Part-of-speech variations" 1-3; the README says any
    # other inconsistency would be a bug in the data.
    assert set(by_word) == {"ferry", "moored", "that"}
    assert odd_ones(by_word["ferry"], "VB") == [("night_of_the_lemons.mrg", 9)]
    assert odd_ones(by_word["moored"], "VBN") == [("night_of_the_lemons.mrg", 18)]
    shared_dt = [(o.document, o.ordinal) for o in by_word["that"].occurrences
                 if o.label == "DT" and o.shared]
    assert shared_dt == [("board_minutes.mrg", 18)]


def test_sample_rules_file_finds_the_planted_violations(demo_db, demo_dir):
    result = CliRunner().invoke(check, ["rules", str(demo_dir / "rules.txt"), "--db",
                                        str(demo_db), "--format", "json"])
    assert result.exit_code == 1, result.output
    rules = {r["name"]: r for r in json.loads(result.stdout)["rules"]}
    places = {name: [(v["document"], v["ordinal"]) for v in r["violations"]]
              for name, r in rules.items()}
    # demo_treebank/README.md, "Rule violations" 1 and 2.
    assert places["np-over-bare-vp"] == [("harbour_notices.mrg", 6)]
    assert places["relative-pronoun-has-trace"] == [("night_of_the_lemons.mrg", 28)]
    assert rules["logical-subjects-are-marked"]["passed"]
    assert rules["few-unlike-coordinations"]["passed"]


def test_variation_and_tags_commands(demo_db):
    runner = CliRunner()
    text = runner.invoke(check, ["variation", "--db", str(demo_db), "--limit", "2"])
    assert text.exit_code == 0, text.output
    assert text.stdout.startswith('1. "the harbour office"')
    assert "2 variation nuclei" in text.stdout
    as_json = runner.invoke(check, ["tags", "--db", str(demo_db), "--non-fringe",
                                    "--min-context", "2", "--format", "json"])
    document = json.loads(as_json.stdout)
    assert document["check"] == "tags" and document["options"]["non_fringe"] is True
    assert sorted(v["words"] for v in document["variations"]) == ["ferry", "moored", "that"]
    bad = runner.invoke(check, ["variation", "--db", str(demo_db), "--min-length", "4",
                                "--max-length", "2"])
    assert bad.exit_code == 2
