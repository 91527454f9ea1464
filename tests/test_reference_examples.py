"""Every worked example of the language reference (grammar/README.md) gives exactly its output.

The examples document the language; their correctness against an independent
matcher is the job of tests/test_differential.py, which runs the same constructs.
"""
from __future__ import annotations

import pytest
from reference_examples import REFERENCE, examples, run

EXAMPLES = examples(REFERENCE.read_text(encoding="utf-8"))


def test_the_reference_has_worked_examples():
    assert len(EXAMPLES) >= 40


@pytest.mark.parametrize("example", EXAMPLES, ids=[f"line{e.line}" for e in EXAMPLES])
def test_worked_example(example, demo_cache):
    assert run(example.command) == example.expected, (
        f"grammar/README.md:{example.line}: `treequery {example.command}` printed something else;"
        " if the change is intended, run `python tests/reference_examples.py --update`")
