"""Make the README's screenshot of the web page: `python tests/web/screenshot.py`.

Starts `treequery serve` on the demo treebank, types a search into the page in the
system chromium and saves demo_treebank/figures/web_page.png.
"""
from __future__ import annotations

import sys
from pathlib import Path

REPO_ROOT = Path(__file__).resolve().parent.parent.parent
sys.path[:0] = [str(REPO_ROOT), str(REPO_ROOT / "tests")]

from playwright.sync_api import sync_playwright  # noqa: E402
from web.helpers import Server  # noqa: E402

from treequery.demo import demo_index_path  # noqa: E402

TARGET = REPO_ROOT / "demo_treebank" / "figures" / "web_page.png"
PATTERN = """\
# verb phrases with an object followed by a prepositional phrase
vp:VP {
  parent-of v:/^VB/
  parent-of o:NP
  parent-of p:PP
}
o precedes p"""


def main() -> None:
    server = Server(demo_index_path())
    try:
        with sync_playwright() as playwright:
            browser = playwright.chromium.launch(executable_path="/usr/bin/chromium",
                                                 args=["--no-sandbox"])
            page = browser.new_page(viewport={"width": 1280, "height": 1180})
            page.goto(server.url)
            page.wait_for_function("() => document.querySelector('#index-info').textContent")
            page.focus("#pattern")
            page.keyboard.type(PATTERN)
            page.keyboard.press("Control+Enter")
            page.wait_for_function(
                "() => document.querySelector('#status').textContent.includes(' of ')")
            page.evaluate("() => document.activeElement.blur()")
            page.screenshot(path=str(TARGET))
            browser.close()
    finally:
        server.stop()
    print(f"wrote {TARGET} ({TARGET.stat().st_size:,} bytes)")


if __name__ == "__main__":
    main()
