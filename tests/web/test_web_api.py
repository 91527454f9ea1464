"""The JSON API of `treequery serve`, through starlette's test client on real indexes.

Expected answers come from outside the web layer: the brute-force reference matcher
over NLTK trees (tests/reference/), NLTK's reading of the source files, the printed
output of the `find` command, and the position of a character we put into a pattern.
"""
from __future__ import annotations

import json
import threading
import time
import warnings
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import nltk
import pytest

pytest.importorskip("starlette", reason="the web extra is not installed: pip install '.[web]'")
pytest.importorskip("httpx", reason="starlette's test client needs httpx")

from click.testing import CliRunner  # noqa: E402
from conftest import REPO_ROOT, demo_tree_files  # noqa: E402
from results.helpers import nltk_tree_at, unescape  # noqa: E402

from treequery.api import Treebank  # noqa: E402
from treequery.cli import main  # noqa: E402
from treequery.web.app import STATIC_DIR, create_app  # noqa: E402
with warnings.catch_warnings():  # starlette suggests another HTTP client package
    warnings.filterwarnings("ignore", message="Using `httpx`")
    from starlette.testclient import TestClient

from web.helpers import (  # noqa: E402
    HEAVY_PATTERN,
    MARKUP_LABEL,
    MARKUP_TREEBANK,
    MARKUP_WORDS,
    VP_PATTERN,
    load_trees,
    reference_groups,
    reference_results,
)

SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def ref_trees(demo_dir):
    return load_trees(demo_tree_files(demo_dir))


@pytest.fixture(scope="module")
def client(demo_db):
    with TestClient(create_app(demo_db, timeout=10, hosts=["testserver"])) as test_client:
        yield test_client


@pytest.fixture(scope="module")
def markup_db(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("markup")
    (folder / "markup.mrg").write_text(MARKUP_TREEBANK, encoding="utf-8")
    with Treebank(folder / "markup.db") as treebank:
        treebank.index([str(folder / "markup.mrg")])
    return folder / "markup.db"


@pytest.fixture
def in_repo(monkeypatch):
    """Shown paths are relative to the working folder, as for the CLI."""
    monkeypatch.chdir(REPO_ROOT)


def all_pages(client, pattern: str, limit: int) -> list[dict]:
    results, offset = [], 0
    while True:
        answer = client.post("/api/search", json={"pattern": pattern, "offset": offset,
                                                   "limit": limit}).json()
        assert [r["number"] for r in answer["results"]] == \
            list(range(offset + 1, offset + len(answer["results"]) + 1))
        results += answer["results"]
        if not answer["more"]:
            return results
        assert len(answer["results"]) == limit
        offset += limit


# ---------------------------------------------------------------- search and count

def test_pages_hold_every_reference_result_once(client, ref_trees):
    found = all_pages(client, VP_PATTERN, limit=7)
    expected = reference_results(VP_PATTERN, ref_trees)
    names = ("vp", "v", "o", "p")
    shown = sorted((r["document"], r["ordinal"], tuple(r["nodes"][n]["label"] for n in names))
                   for r in found)
    reference = sorted((Path(ref_trees[number].source).name, ref_trees[number].ordinal,
                        tuple(ref_trees[number].nodes[i].label for i in nodes))
                       for number, nodes in expected)
    assert shown == reference
    assert len({tuple(n["id"] for n in r["nodes"].values()) for r in found}) == len(found)


def test_first_result_draws_its_bound_nodes(client, ref_trees):
    first = client.post("/api/search", json={"pattern": VP_PATTERN, "limit": 1}).json()
    result = first["results"][0]
    root = ET.fromstring(result["svg"])
    bound = {g.get("data-var"): g.find(f"{SVG}text").text for g in root.iter(f"{SVG}g")
             if "bound" in g.get("class").split()}
    assert bound == {name: node["label"] for name, node in result["nodes"].items()}
    number, nodes = reference_results(VP_PATTERN, ref_trees)[0]
    assert (result["document"], result["ordinal"]) == \
        (Path(ref_trees[number].source).name, ref_trees[number].ordinal)
    assert set(bound.values()) == {ref_trees[number].nodes[i].label for i in nodes}


def test_concordance_columns_are_the_sentence(client, demo_dir):
    result = client.post("/api/search", json={"pattern": VP_PATTERN, "limit": 1}).json()
    kwic = result["results"][0]["kwic"]
    tree = nltk_tree_at(demo_dir / result["results"][0]["document"], result["results"][0]["line"])
    words = [unescape(w) for w, tag in tree.pos() if tag != "-NONE-"]
    assert " ".join(p for p in (kwic["left"], kwic["match"], kwic["right"]) if p) == \
        " ".join(words)
    assert kwic["var"] == "vp"


def test_count_by_attribute_matches_reference(client, ref_trees):
    answer = client.post("/api/count", json={"pattern": VP_PATTERN,
                                             "by": ["p.functions"]}).json()
    expected = reference_groups(VP_PATTERN, ref_trees, "p", "functions")
    assert {g["key"][0]: g["results"] for g in answer["groups"]} == dict(expected)
    assert answer["results"] == sum(expected.values())
    assert answer["groups_total"] == len(expected)
    assert answer["by"] == ["p.functions"]


def test_count_of_the_unnamed_result_as_match(client, ref_trees):
    answer = client.get("/api/count", params={"pattern": "PP", "by": "match.functions"}).json()
    expected = reference_groups("PP", ref_trees, "_1", "functions")
    assert {g["key"][0]: g["results"] for g in answer["groups"]} == dict(expected)


def test_page_size_is_capped(client):
    answer = client.post("/api/search", json={"pattern": "NP", "limit": 1000,
                                              "svg": False}).json()
    assert answer["limit"] == 100 and len(answer["results"]) == 100 and answer["more"]
    assert "svg" not in answer["results"][0]


@pytest.mark.parametrize("params, named", [({"limit": "ten"}, "limit"),
                                           ({"offset": -1}, "offset"),
                                           ({"by": [3]}, "by"), ({"pattern": ""}, "pattern")])
def test_bad_parameters_are_named(client, params, named):
    answer = client.post("/api/search", json={"pattern": "NP", **params})
    assert answer.status_code == 400
    assert answer.json()["error"]["message"].startswith(named)


# ---------------------------------------------------------------- pattern errors

@pytest.mark.parametrize("endpoint", ["/api/check", "/api/search", "/api/count",
                                      "/api/explain", "/api/export"])
@pytest.mark.parametrize("pattern, culprit", [("VP << NP", "<"),
                                              ("np:NP\nnp parent-of ) PP", ")"),
                                              ("x:NP; y.tokens > 2", "y")])
def test_pattern_errors_are_400_with_position(client, endpoint, pattern, culprit):
    answer = client.post(endpoint, json={"pattern": pattern})
    assert answer.status_code == 400
    error = answer.json()["error"]
    position = pattern.index(culprit)
    before = pattern[:position]
    assert error["position"] == position
    assert error["line"] == before.count("\n") + 1
    assert error["column"] == len(before.split("\n")[-1]) + 1
    assert error["message"]


def test_check_gives_result_variables(client):
    answer = client.get("/api/check", params={"pattern": "PP parent-of o:NP"}).json()
    assert answer["ok"] and answer["result_vars"] == ["o"]
    assert client.get("/api/check", params={"pattern": "PP"}).json()["result_vars"] == ["match"]


class ExampleButtons(HTMLParser):
    """The examples of the page's help panel, as the page puts them into the editor:
    the button's data-pattern when it has one, else its text."""

    def __init__(self):
        super().__init__()
        self.examples: list[str] = []
        self._button: tuple[str | None, list[str]] | None = None

    def handle_starttag(self, tag, attrs):
        attrs = dict(attrs)
        if tag == "button" and "example" in (attrs.get("class") or "").split():
            self._button = (attrs.get("data-pattern"), [])

    def handle_data(self, data):
        if self._button is not None:
            self._button[1].append(data)

    def handle_endtag(self, tag):
        if tag == "button" and self._button is not None:
            given, text = self._button
            self.examples.append(given if given is not None else "".join(text))
            self._button = None


def test_every_help_example_is_a_valid_pattern(client):
    parser = ExampleButtons()
    parser.feed((STATIC_DIR / "index.html").read_text(encoding="utf-8"))
    assert len(parser.examples) >= 15
    for example in parser.examples:
        answer = client.post("/api/check", json={"pattern": example})
        assert answer.status_code == 200, (example, answer.json())


# ---------------------------------------------------------------- limits

def test_time_limit_stops_search_count_and_export(demo_db):
    with TestClient(create_app(demo_db, timeout=0.05, hosts=["testserver"])) as slow:
        # Skipping millions of results keeps SQLite busy long past 0.05 s.
        found = slow.post("/api/search", json={"pattern": HEAVY_PATTERN,
                                               "offset": 5_000_000}).json()
        assert found["stopped"] == "time limit" and "time limit" in found["message"]
        assert found["results"] == [] and found["more"] is None
        counted = slow.post("/api/count", json={"pattern": HEAVY_PATTERN}).json()
        assert counted["stopped"] == "time limit" and counted["results"] is None
        exported = slow.post("/api/export", json={"pattern": HEAVY_PATTERN})
        assert exported.status_code == 503 and exported.json()["stopped"] == "time limit"
        # The server is still there and answers the next search.
        assert slow.post("/api/search", json={"pattern": "NP", "limit": 1}).status_code == 200


def wait_for_running(settings, number: int) -> None:
    """Wait until `number` searches are registered (a condition, not a timing check)."""
    deadline = time.monotonic() + 30
    while settings.tabs.running() != number:
        assert time.monotonic() < deadline, "the search never started"
        time.sleep(0.01)


def test_new_search_from_a_tab_cancels_its_old_one(demo_db):
    app = create_app(demo_db, timeout=120, hosts=["testserver"])
    answers = {}
    with TestClient(app) as client:
        def slow_search():
            answers["slow"] = client.post("/api/search", json={
                "pattern": HEAVY_PATTERN, "offset": 10**12, "tab": "tab-1"})

        worker = threading.Thread(target=slow_search)
        worker.start()
        wait_for_running(app.state.settings, 1)
        other = client.post("/api/search", json={"pattern": "NP", "limit": 1, "tab": "tab-2"})
        assert other.status_code == 200 and app.state.settings.tabs.running() == 1
        again = client.post("/api/search", json={"pattern": "NP", "limit": 1, "tab": "tab-1"})
        assert again.status_code == 200
        worker.join(timeout=60)
    assert not worker.is_alive()
    assert answers["slow"].status_code == 409
    assert answers["slow"].json()["stopped"] == "cancelled"


# ---------------------------------------------------------------- exports

@pytest.mark.parametrize("fmt, cli_format", [("csv", "csv"), ("jsonl", "json")])
def test_export_equals_find_output(client, demo_db, in_repo, fmt, cli_format):
    answer = client.post("/api/export", json={"pattern": VP_PATTERN, "format": fmt})
    assert answer.status_code == 200
    assert answer.headers["content-disposition"] == \
        f'attachment; filename="treequery-results.{fmt}"'
    printed = CliRunner().invoke(main, ["find", VP_PATTERN, "--db", str(demo_db),
                                        "--format", cli_format])
    assert printed.exit_code == 0
    assert answer.text == printed.output


def test_export_pages_like_find(client, demo_db, in_repo):
    answer = client.get("/api/export", params={"pattern": "NP", "format": "csv",
                                               "offset": 3, "limit": 4})
    printed = CliRunner().invoke(main, ["find", "NP", "--db", str(demo_db), "--format", "csv",
                                        "--offset", "3", "--limit", "4"])
    assert answer.text == printed.output and answer.text.count("\n") == 5


def test_export_format_is_checked(client):
    assert client.get("/api/export", params={"pattern": "NP", "format": "xml"}).status_code == 400


# ---------------------------------------------------------------- trees and explain

def test_tree_is_the_source_tree(client, demo_dir):
    answer = client.get("/api/tree/3").json()
    source = nltk_tree_at(demo_dir / answer["document"], answer["line"])
    assert nltk.Tree.fromstring(answer["brackets"]).leaves() == source.leaves()
    drawn = [t.text for t in ET.fromstring(answer["svg"]).iter(f"{SVG}text")
             if t.get("class", "").startswith("word")]
    assert drawn == [unescape(w) if tag != "-NONE-" else w for w, tag in source.pos()]


def test_missing_tree_is_404(client):
    assert client.get("/api/tree/999999").status_code == 404
    assert client.get("/api/tree/abc").status_code == 404


def test_explain_shows_the_sql(client):
    answer = client.get("/api/explain", params={"pattern": "vp:VP parent-of o:NP"})
    assert answer.status_code == 200 and "SQL:" in answer.json()["text"]


# ---------------------------------------------------------------- safety

def test_markup_words_are_escaped_in_drawings(markup_db):
    with TestClient(create_app(markup_db, hosts=["testserver"])) as client:
        answer = client.post("/api/search", json={"pattern": "w:*; w.preterminal"}).json()
        words = [r["nodes"]["w"]["words"] for r in answer["results"]]
        assert words == [*MARKUP_WORDS, "."]
        svg = answer["results"][0]["svg"]
        assert "<script" not in svg and "<img" not in svg and "<i>" not in svg
        root = ET.fromstring(svg)  # well-formed XML: every word came through escaped
        assert [t.text for t in root.iter(f"{SVG}text") if t.get("class") == "word"] == \
            [*MARKUP_WORDS, "."]
        assert MARKUP_LABEL in [t.text for t in root.iter(f"{SVG}text")
                                if t.get("class") == "label"]
        rows = client.post("/api/export", json={"pattern": "w:*; w.preterminal",
                                                "format": "jsonl"}).text.splitlines()
        assert [json.loads(row)["nodes"]["w"]["words"] for row in rows] == [*MARKUP_WORDS, "."]


def test_page_and_headers(client):
    page = client.get("/")
    assert page.status_code == 200 and "<textarea id=\"pattern\"" in page.text
    policy = page.headers["content-security-policy"]
    assert "script-src 'self'" in policy and "unsafe-inline" not in policy.split("style-src")[0]
    assert client.get("/static/page.js").status_code == 200


@pytest.mark.parametrize("path", ["/static/%2e%2e/work.py", "/static/..%2fapp.py",
                                  "/static/%2e%2e/%2e%2e/api.py", "/api/tree/..%2f..%2fetc"])
def test_no_file_outside_the_static_folder(client, path):
    assert client.get(path).status_code == 404


def test_other_host_names_are_refused(client):
    assert client.get("/", headers={"host": "attacker.example"}).status_code == 400


def test_parameters_never_name_a_file(client):
    """A `db` parameter is not a thing: the index is the one the server was started on."""
    answer = client.get("/api/info", params={"db": "/etc/passwd"}).json()
    assert answer["trees"] > 0 and answer["index"] != "passwd"


# ---------------------------------------------------------------- the serve command

def test_serve_refuses_other_addresses_without_the_flag(demo_db):
    result = CliRunner().invoke(main, ["serve", "--db", str(demo_db), "--host", "0.0.0.0"])
    assert result.exit_code == 2 and "--allow-remote" in result.output


def test_serve_warns_when_allowed_elsewhere(demo_db, monkeypatch):
    import uvicorn

    started = {}
    monkeypatch.setattr(uvicorn, "run", lambda app, **options: started.update(options))
    result = CliRunner().invoke(main, ["serve", "--db", str(demo_db), "--host", "0.0.0.0",
                                       "--allow-remote"])
    assert result.exit_code == 0, result.output
    assert "warning" in result.output and started["host"] == "0.0.0.0"


def test_serve_without_the_web_extra_says_what_to_install(demo_db, monkeypatch):
    monkeypatch.setitem(__import__("sys").modules, "uvicorn", None)  # import fails
    result = CliRunner().invoke(main, ["serve", "--db", str(demo_db)])
    assert result.exit_code == 1 and "pip install 'treequery[web]'" in result.output


def test_serve_needs_an_existing_index(tmp_path):
    result = CliRunner().invoke(main, ["serve", "--db", str(tmp_path / "none.db")])
    assert result.exit_code == 1 and "no index" in result.output
