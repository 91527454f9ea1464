"""The page in a real browser: Debian's chromium driven by Playwright, against
`treequery serve` started on 127.0.0.1 by the tests.

Expected values come from the brute-force reference matcher over NLTK trees
(hits, highlighted nodes, counts) and from the `find` command's output (downloads).
Run them alone with `python -m pytest -q tests/web/test_web_browser.py`.
"""
from __future__ import annotations

import re
from pathlib import Path

import pytest

CHROMIUM = Path("/usr/bin/chromium")
if not CHROMIUM.exists():
    pytest.skip(f"no system chromium at {CHROMIUM} (apt-get install -y chromium)",
                allow_module_level=True)
sync_api = pytest.importorskip("playwright.sync_api",
                               reason="playwright is not installed: pip install -e '.[test]'")
pytest.importorskip("uvicorn", reason="the web extra is not installed: pip install '.[web]'")

from click.testing import CliRunner  # noqa: E402
from conftest import REPO_ROOT, demo_tree_files  # noqa: E402
from web.helpers import (  # noqa: E402
    MARKUP_LABEL,
    MARKUP_TREEBANK,
    MARKUP_WORDS,
    VP_PATTERN,
    Server,
    load_trees,
    reference_groups,
    reference_results,
)

from treequery.api import Treebank  # noqa: E402
from treequery.cli import main  # noqa: E402

WAIT_MS = 30_000  # patience for the page to answer (a condition, not a timing check)


@pytest.fixture(scope="module")
def ref_trees(demo_dir):
    return load_trees(demo_tree_files(demo_dir))


@pytest.fixture(scope="module")
def server(demo_db):
    running = Server(demo_db)
    yield running
    running.stop()


@pytest.fixture(scope="module")
def browser():
    with sync_api.sync_playwright() as playwright:
        launched = playwright.chromium.launch(executable_path=str(CHROMIUM),
                                              args=["--no-sandbox"])
        yield launched
        launched.close()


@pytest.fixture
def page(browser, server):
    context = browser.new_context(accept_downloads=True, viewport={"width": 1200, "height": 900})
    opened = context.new_page()
    errors: list[str] = []
    opened.on("pageerror", lambda error: errors.append(str(error)))
    opened.goto(server.url)
    opened.wait_for_function("() => document.querySelector('#index-info').textContent !== ''")
    yield opened
    context.close()
    assert errors == [], errors


def search_by_keyboard(page, pattern: str) -> None:
    """Type the pattern into the editor and press Ctrl+Enter: no mouse involved."""
    page.focus("#pattern")
    page.keyboard.type(pattern)
    page.keyboard.press("Control+Enter")


def wait_for_status(page, pattern: str) -> str:
    page.wait_for_function("(wanted) => new RegExp(wanted).test("
                           "document.querySelector('#status').textContent)",
                           arg=pattern, timeout=WAIT_MS)
    return page.text_content("#status")


def first_drawing_marks(page) -> dict[str, str]:
    """Variable name -> label of every highlighted node in the first drawing."""
    return page.eval_on_selector(
        "#results li svg",
        "svg => Object.fromEntries([...svg.querySelectorAll('g.bound')]"
        ".map(g => [g.dataset.var, g.querySelector('text.label').textContent]))")


def test_search_shows_hits_and_highlighted_nodes(page, ref_trees):
    expected = reference_results(VP_PATTERN, ref_trees)
    trees = len({number for number, _ in expected})
    search_by_keyboard(page, VP_PATTERN)
    status = wait_for_status(page, r"Results 1–10 of \d+")
    assert status == f"Results 1–10 of {len(expected)} (in {trees} trees)."
    assert page.locator("#results > li").count() == 10
    number, nodes = expected[0]
    ref_tree = ref_trees[number]
    marks = first_drawing_marks(page)
    assert set(marks) == {"vp", "v", "o", "p"}
    assert sorted(marks.values()) == sorted(ref_tree.nodes[i].label for i in nodes)
    location = page.text_content("#results li .location")
    assert location.startswith(f"demo_treebank/{Path(ref_tree.source).name}:")


def test_paging_by_keyboard_and_buttons(page, ref_trees):
    total = len(reference_results(VP_PATTERN, ref_trees))
    search_by_keyboard(page, VP_PATTERN)
    wait_for_status(page, "Results 1–10 of")
    first_page = page.text_content("#results li .location")
    page.keyboard.press("Alt+ArrowRight")
    wait_for_status(page, "Results 11–20 of")
    pages = -(-total // 10)
    assert page.text_content("#page-label") == f"Page 2 of {pages}"
    assert page.get_attribute("#results", "start") == "11"
    assert page.text_content("#results li .location") != first_page
    page.click("#prev-page")
    wait_for_status(page, "Results 1–10 of")
    assert page.text_content("#results li .location") == first_page
    page.fill("#page-number", str(pages))
    page.press("#page-number", "Enter")
    wait_for_status(page, f"Results {(pages - 1) * 10 + 1}–{total} of")
    assert page.is_disabled("#next-page")


def test_counts_view_groups_by_a_variable_attribute(page, ref_trees):
    expected = reference_groups(VP_PATTERN, ref_trees, "p", "functions")
    search_by_keyboard(page, VP_PATTERN)
    wait_for_status(page, "Results 1–10 of")
    page.focus("#tab-counts")
    page.keyboard.press("Enter")
    assert page.is_visible("#counts-panel") and not page.is_visible("#results-panel")
    page.select_option("#count-by", "p.functions")
    page.click("#count")
    wait_for_status(page, "Counted")
    rows = page.eval_on_selector_all(
        "#count-table tbody tr", "rows => rows.map(r => [...r.cells].map(c => c.textContent))")
    shown = {("" if key == "(empty)" else key): int(results) for key, results, _ in rows}
    assert shown == dict(expected)
    assert page.locator("#count-chart rect").count() == min(len(expected), 25)


def test_syntax_error_shown_at_its_position_while_typing(page):
    page.focus("#pattern")
    page.keyboard.type("vp:VP\nvp parent-of ) PP")
    page.wait_for_selector("#pattern-error:not([hidden])", timeout=WAIT_MS)
    assert page.text_content("#error-where") == "Line 2, column 14:"
    assert "unexpected `)`" in page.text_content("#error-message")
    before, marked = page.eval_on_selector(
        "#pattern-backdrop", "b => [b.firstChild.textContent, b.querySelector('mark').textContent]")
    assert (before, marked) == ("vp:VP\nvp parent-of ", ")")
    assert page.get_attribute("#pattern", "aria-invalid") == "true"
    # Mending the pattern takes the error away.
    page.keyboard.press("End")
    for _ in range(4):
        page.keyboard.press("Backspace")
    page.keyboard.type("PP")
    page.wait_for_selector("#pattern-error", state="hidden", timeout=WAIT_MS)


def test_download_csv_equals_find_output(page, demo_db, monkeypatch):
    search_by_keyboard(page, VP_PATTERN)
    wait_for_status(page, "Results 1–10 of")
    with page.expect_download(timeout=WAIT_MS) as started:
        page.click("#download-csv")
    downloaded = Path(started.value.path()).read_text(encoding="utf-8")
    assert started.value.suggested_filename == "treequery-results.csv"
    monkeypatch.chdir(REPO_ROOT)  # the server runs there: the same shown paths
    printed = CliRunner().invoke(main, ["find", VP_PATTERN, "--db", str(demo_db),
                                        "--format", "csv"])
    assert downloaded == printed.output


def test_help_example_goes_into_the_editor(page):
    page.focus("#help-toggle")
    page.keyboard.press("Enter")
    assert page.is_visible("#help")
    focused = page.evaluate("document.activeElement.textContent")
    page.keyboard.press("Enter")
    assert page.input_value("#pattern") == focused
    page.keyboard.press("Control+Enter")
    wait_for_status(page, r"Results 1–\d+ of|No results")


# ---------------------------------------------------------------- markup in a treebank

@pytest.fixture(scope="module")
def markup_server(tmp_path_factory):
    folder = tmp_path_factory.mktemp("markup-page")
    (folder / "markup.mrg").write_text(MARKUP_TREEBANK, encoding="utf-8")
    with Treebank(folder / "markup.db") as treebank:
        treebank.index([str(folder / "markup.mrg")])
    running = Server(folder / "markup.db")
    yield running
    running.stop()


def test_markup_in_words_and_labels_is_shown_as_text(browser, markup_server):
    context = browser.new_context()
    page = context.new_page()
    dialogs: list[str] = []
    page.on("dialog", lambda dialog: (dialogs.append(dialog.message), dialog.dismiss()))
    page.goto(markup_server.url)
    search_by_keyboard(page, "w:*; w.preterminal")
    wait_for_status(page, "Results 1–6 of 6")
    drawn = page.eval_on_selector("#results li svg", "svg => [...svg.querySelectorAll("
                                  "'text.word')].map(t => t.textContent)")
    assert drawn == [*MARKUP_WORDS, "."]
    labels = page.eval_on_selector("#results li svg", "svg => [...svg.querySelectorAll("
                                   "'text.label')].map(t => t.textContent)")
    assert MARKUP_LABEL in labels
    words = page.eval_on_selector_all("#results .kwic mark", "marks => marks.map(m => "
                                      "m.textContent)")
    assert words == [*MARKUP_WORDS, "."]
    assert page.evaluate("window.__injected") is None
    assert page.evaluate("document.querySelectorAll('script').length") == 1  # page.js only
    assert page.evaluate("document.querySelectorAll('img, i').length") == 0
    assert dialogs == []
    assert re.search(r"<script>window\.__injected=1</script>", page.inner_text("#results"))
    context.close()
