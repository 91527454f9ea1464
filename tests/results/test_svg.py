"""SVG drawings: well-formed XML, every word of the tree in order, every bound node marked."""
from __future__ import annotations

import xml.etree.ElementTree as ET

import pytest

from results.helpers import REPO_ROOT, cli, nltk_tree_at, unescape

SVG = "{http://www.w3.org/2000/svg}"
PATTERNS = ["vp:VP parent-of o:NP", "a:MD just-before b:RB", 'VBD "moored"',
            "s:S dominates e:-NONE-"]


def words_and_marks(svg_text: str) -> tuple[list[str], list[str], list[tuple[str, str]]]:
    root = ET.fromstring(svg_text)  # raises on anything that is not well-formed XML
    assert root.tag == f"{SVG}svg"
    texts = list(root.iter(f"{SVG}text"))
    overt = [t.text for t in texts if t.get("class") == "word"]
    every = [t.text for t in texts if t.get("class", "").startswith("word")]
    bound = [(g.get("data-var"), g.get("data-id")) for g in root.iter(f"{SVG}g")
             if "bound" in g.get("class", "").split()]
    return overt, every, bound


def check_drawing(svg_text: str, path: str, line: int, expected_vars: set[str]) -> None:
    overt, every, bound = words_and_marks(svg_text)
    tree = nltk_tree_at(path, line)  # NLTK as the independent reading of the source
    assert every == [unescape(w) if tag != "-NONE-" else w for w, tag in tree.pos()]
    assert overt == [unescape(w) for w, tag in tree.pos() if tag != "-NONE-"]
    assert {name for name, _ in bound} >= expected_vars


@pytest.mark.parametrize("pattern", PATTERNS)
def test_every_drawing_is_xml_with_all_words_and_marks(demo_db, tmp_path, monkeypatch, pattern):
    monkeypatch.chdir(REPO_ROOT)
    listing = cli("draw", pattern, "--db", str(demo_db), "--out", str(tmp_path), "--limit", "8")
    lines = listing.splitlines()
    assert len(lines) == len(list(tmp_path.glob("*.svg"))) > 0
    for line in lines:
        file, _, where = line.partition("  # ")
        location = where.split("  tree ")[0]
        path, _, number = location.rpartition(":")
        with open(file, encoding="utf-8") as handle:  # draw prints the paths it wrote
            svg_text = handle.read()
        names = {part.split(":")[0] for part in pattern.split() if ":" in part} or {"match"}
        check_drawing(svg_text, path, int(number), names)


def test_bound_nodes_are_the_result_nodes(demo_db, tmp_path, monkeypatch):
    from treequery import Treebank
    from treequery.results.svg import result_svg

    with Treebank(demo_db, readonly=True) as bank:
        for result in bank.find("vp:VP parent-of o:NP", limit=20):
            _, _, bound = words_and_marks(result_svg(result, bank.tree(result.tree_id)))
            marked = {(name, int(node)) for name, node in bound}
            assert marked == {(var, node.id) for var, node in result.bindings.items()}


def test_html_page_holds_every_drawing(demo_db, tmp_path):
    cli("draw", "vp:VP parent-of o:NP", "--db", str(demo_db), "--out", str(tmp_path),
        "--limit", "3", "--html")
    page = (tmp_path / "index.html").read_text(encoding="utf-8")
    assert page.count("<svg ") == 3 and page.count("<h2>") == 3


def test_sixty_word_tree_keeps_words_apart(wsj_db, tmp_path):
    """Legibility proxy on a long WSJ sentence: neighbouring words never overlap."""
    from treequery import Treebank
    from treequery.results.svg import CHAR_WIDTH, FONT_SIZE, tree_svg

    with Treebank(wsj_db, readonly=True) as bank:
        row = bank.conn.execute(
            "SELECT id FROM tree WHERE n_tokens >= 60 ORDER BY n_tokens LIMIT 1").fetchone()
        assert row, "the WSJ sample has sentences of 60 words and more"
        root = ET.fromstring(tree_svg(bank.tree(row[0])))
    words = [t for t in root.iter(f"{SVG}text") if t.get("class", "").startswith("word")]
    assert len(words) >= 60
    for left, right in zip(words, words[1:], strict=False):
        half = (len(left.text) + len(right.text)) * FONT_SIZE * CHAR_WIDTH / 2
        assert float(right.get("x")) - float(left.get("x")) >= half
    assert all(float(t.get("font-size", FONT_SIZE)) >= 12 for t in words)
