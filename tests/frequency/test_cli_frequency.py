"""`count --per/--patterns/--format/--chart` and `compare` on the command line.

The numbers themselves are checked against the reference matcher in test_breakdown.py
and test_compare.py; here each output format is read back with a general-purpose
reader (csv, json, xml.etree) and must hold the API's values under the stable names.
"""
from __future__ import annotations

import csv
import io
import json
import xml.etree.ElementTree as ET

import pytest
from click.testing import CliRunner

from treequery.api import Treebank
from treequery.cli import main

SVG = "{http://www.w3.org/2000/svg}"


def run(*args: str) -> tuple[int, str, str]:
    result = CliRunner().invoke(main, list(args))
    return result.exit_code, result.stdout, result.stderr


@pytest.fixture(scope="module")
def bank(demo_db):
    return Treebank(demo_db, readonly=True)


def as_text(value) -> str:
    return "" if value is None else str(value)


@pytest.mark.parametrize("fmt, delimiter", [("csv", ","), ("tsv", "\t")])
def test_count_per_genre_delimited(demo_db, bank, fmt, delimiter):
    code, out, _ = run("count", "v:VP parent-of PP", "--db", str(demo_db), "--per", "genre",
                       "--by", "v.headtag", "--format", fmt)
    assert code == 0
    rows = list(csv.reader(io.StringIO(out), delimiter=delimiter))
    table = bank.frequencies("v:VP parent-of PP", by=["v.headtag"], per="genre")
    assert rows[0] == table.columns == ["cell", "v.headtag", "results", "trees", "cell_trees",
                                        "cell_tokens", "per_1000_trees", "per_million_tokens",
                                        "range", "cell_documents", "dp", "dp_norm"]
    assert rows[1:] == [[as_text(v) for v in record] for record in table.records()]
    assert float(rows[1][7]) == table.rows[0].per_million_tokens  # full precision


def test_count_json(demo_db, bank):
    code, out, _ = run("count", "VP parent-of PP", "--db", str(demo_db), "--per", "corpus",
                       "--format", "json")
    assert code == 0
    data = json.loads(out)
    table = bank.frequencies("VP parent-of PP", per="corpus")
    assert data["per"] == "corpus" and data["by"] == []
    assert data["rows"] == [dict(zip(table.columns, r, strict=True)) for r in table.records()]


def test_count_table(demo_db):
    code, out, _ = run("count", "VP parent-of PP", "--db", str(demo_db), "--per", "genre")
    assert code == 0
    lines = out.splitlines()
    assert lines[0].split() == ["cell", "results", "trees", "cell_trees", "cell_tokens",
                                "per_1000_trees", "per_million_tokens", "range",
                                "cell_documents", "dp", "dp_norm"]
    assert set(lines[1]) <= {"-", " "}
    assert len(lines) == 2 + 6  # six genres in demo_treebank/documents.tsv


def test_count_patterns_file_with_chart(demo_db, bank, tmp_path):
    patterns = tmp_path / "set.tqp"
    patterns.write_text("@pp VP parent-of PP\n@sbj NP-SBJ\n", encoding="utf-8")
    chart = tmp_path / "chart.svg"
    code, out, _ = run("count", "--patterns", str(patterns), "--db", str(demo_db),
                       "--per", "genre", "--format", "csv", "--chart", str(chart))
    assert code == 0
    rows = list(csv.DictReader(io.StringIO(out)))
    assert [row["pattern"] for row in rows] == ["pp"] * 6 + ["sbj"] * 6
    alone = bank.frequencies("NP-SBJ", per="genre")
    assert [int(row["results"]) for row in rows[6:]] == [r.results for r in alone.rows]
    root = ET.parse(chart).getroot()  # well-formed XML
    assert root.tag == f"{SVG}svg"
    texts = {"".join(t.itertext()) for t in root.iter(f"{SVG}text")}
    assert {"pp", "sbj"} <= texts            # one cluster per pattern
    assert {"letter", "story"} <= texts      # one bar (legend entry) per genre


def test_compare_formats_and_chart(demo_db, bank, tmp_path):
    args = ["compare", "x:NP", "--between", "genre:letter", "genre:story", "--by",
            "x.functions", "--db", str(demo_db)]
    compared = bank.compare("x:NP", "genre:letter", "genre:story", by=["x.functions"])
    code, out, _ = run(*args, "--format", "csv")
    assert code == 0
    rows = list(csv.reader(io.StringIO(out)))
    assert rows[0] == compared.columns
    assert rows[0][-3:] == ["g2", "p_value", "log_ratio"]
    assert rows[1:] == [[as_text(v) for v in record] for record in compared.records()]
    code, out, _ = run(*args, "--format", "json")
    assert json.loads(out)["rows"][0]["a_side"] == "genre:letter"
    chart = tmp_path / "compare.svg"
    code, out, _ = run(*args, "--chart", str(chart))
    assert code == 0 and out.startswith("a: genre:letter  (1 document, ")
    root = ET.parse(chart).getroot()
    texts = {"".join(t.itertext()) for t in root.iter(f"{SVG}text")}
    assert {"genre:letter", "genre:story"} <= texts


@pytest.mark.parametrize("args, message", [
    (["compare", "NP", "--between", "genre", "genre:story"], "corpus:NAME, document:NAME"),
    (["compare", "NP", "--between", "genre:leter", "genre:story"], "genre values in this"),
    (["count", "NP", "--per", "genr"], "keys in this index: genre, source, title"),
])
def test_bad_input_exits_2(demo_db, args, message):
    code, _, err = run(*args, "--db", str(demo_db))
    assert code == 2
    assert message in err


def test_bad_pattern_set_exits_2_with_its_position(demo_db, tmp_path):
    patterns = tmp_path / "bad.tqp"
    patterns.write_text("@a NP\n@b VP parent-of\n", encoding="utf-8")
    code, _, err = run("count", "--patterns", str(patterns), "--db", str(demo_db))
    assert code == 2
    assert err.startswith(f"{patterns}:2:16: in pattern 'b': unexpected end of pattern")


def test_plain_count_tsv(demo_db, bank):
    code, out, _ = run("count", "VP parent-of PP", "--db", str(demo_db), "--format", "tsv")
    counted = bank.count("VP parent-of PP")
    assert out.splitlines() == ["results\ttrees", f"{counted.results}\t{counted.trees}"]
