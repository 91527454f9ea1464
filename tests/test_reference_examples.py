"""Every worked example of the language reference (grammar/README.md) gives exactly its output.

The examples document the language; their correctness against an independent
matcher is the job of tests/test_differential.py, which runs the same constructs.
"""
from __future__ import annotations

import pytest
from reference_examples import DOCUMENTS, REFERENCE, ROOT, examples, run

EXAMPLES = [(document, example) for document in DOCUMENTS
            for example in examples(document.read_text(encoding="utf-8"))]


def test_the_reference_has_worked_examples():
    assert sum(1 for document, _ in EXAMPLES if document == REFERENCE) >= 40


@pytest.mark.parametrize(
    "document, example", EXAMPLES,
    ids=[f"{d.relative_to(ROOT)}:{e.line}" for d, e in EXAMPLES])
def test_worked_example(document, example, demo_cache, monkeypatch):
    monkeypatch.chdir(ROOT)  # commands name files relative to the repository, as in the docs
    where = f"{document.relative_to(ROOT)}:{example.line}"
    assert run(example.command) == example.expected, (
        f"{where}: `treequery {example.command}` printed something else; if the change"
        " is intended, run `python tests/reference_examples.py --update` from the repository")
