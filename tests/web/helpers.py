"""Shared by the web tests: reference answers from the brute-force matcher, a treebank
whose words are markup, and a real server started in a subprocess."""
from __future__ import annotations

import os
import socket
import subprocess
import sys
import time
import urllib.request
from collections import Counter
from pathlib import Path

from conftest import REPO_ROOT
from reference.matcher import match_corpus
from reference.nodes import RefTree, load_corpus

from treequery.pattern.check import compile_pattern

# The pattern the browser tests type: a verb phrase with a verb, an object and a PP.
VP_PATTERN = ("vp:VP {\n  parent-of v:/^VB/   # the verb\n  parent-of o:NP\n"
              "  parent-of p:PP\n}\no precedes p")
# Millions of results on the demo treebank (every pair of nodes, twice over): a search
# that runs for many seconds unless something stops it.
HEAVY_PATTERN = "a:* dominates b:*; c:* precedes d:*; e:* sister-of f:*"

# Words and a label that are markup: the page must show them as text and run nothing.
MARKUP_WORDS = ["<script>window.__injected=1</script>", "&amp;", '"quotes"',
                "<img/src=x/onerror=window.__injected=2>", "<b>bold</b>"]
MARKUP_LABEL = "<i>"
MARKUP_TREEBANK = """\
(S (NP-SBJ (NN <script>window.__injected=1</script>) (CC &amp;) (NNS "quotes"))
   (VP (VBZ <img/src=x/onerror=window.__injected=2>)
       (NP (<i> <b>bold</b>)))
   (. .))
"""


def reference_results(pattern: str, trees: list[RefTree]) -> list[tuple[int, tuple[int, ...]]]:
    """Results in corpus order as (tree number, pre-order index of each result variable)."""
    return sorted(match_corpus(compile_pattern(pattern), trees))


def reference_groups(pattern: str, trees: list[RefTree], var: str, attribute: str) -> Counter:
    """Results grouped by one attribute of one variable, computed on the NLTK trees."""
    compiled = compile_pattern(pattern)
    where = compiled.result_vars.index(var)
    return Counter(trees[number].nodes[nodes[where]].attribute(attribute)
                   for number, nodes in match_corpus(compiled, trees))


def load_trees(files: list[Path]) -> list[RefTree]:
    return load_corpus(files)


def free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


class Server:
    """`treequery serve` in a subprocess on a free port of 127.0.0.1, until stopped."""

    def __init__(self, db: Path, timeout: float = 10.0):
        self.port = free_port()
        self.url = f"http://127.0.0.1:{self.port}/"
        env = {**os.environ, "PYTHONPATH": str(REPO_ROOT)}
        self.process = subprocess.Popen(
            [sys.executable, "-m", "treequery.cli", "serve", "--db", str(db),
             "--port", str(self.port), "--timeout", str(timeout)],
            cwd=REPO_ROOT, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
        self._wait_until_answering()

    def _wait_until_answering(self, patience: float = 30.0) -> None:
        deadline = time.monotonic() + patience
        while time.monotonic() < deadline:
            if self.process.poll() is not None:
                raise RuntimeError(f"treequery serve ended: {self.process.stderr.read()}")
            try:
                with urllib.request.urlopen(self.url + "api/info", timeout=2) as answer:
                    if answer.status == 200:
                        return
            except OSError:
                time.sleep(0.1)  # not listening yet
        self.stop()
        raise RuntimeError(f"treequery serve did not answer at {self.url} in {patience} s")

    def stop(self) -> str:
        """Stop the server; returns what it wrote to standard error."""
        self.process.terminate()
        try:
            _, errors = self.process.communicate(timeout=10)
        except subprocess.TimeoutExpired:
            self.process.kill()
            _, errors = self.process.communicate()
        return errors
