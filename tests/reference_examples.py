"""Worked examples of grammar/README.md: find them, run them, and (with --update) rewrite them.

An example is a ```console block whose lines beginning with `$ treequery ` are
commands; the lines after a command, up to the next command or the end of the
block, are its exact output on the bundled demo treebank.
"""
from __future__ import annotations

import re
import shlex
import sys
from dataclasses import dataclass
from pathlib import Path

from click.testing import CliRunner

ROOT = Path(__file__).resolve().parent.parent
REFERENCE = ROOT / "grammar" / "README.md"
# Documents whose console examples are run by the tests: the language reference
# and the project README.
DOCUMENTS = (REFERENCE, ROOT / "README.md")
BLOCK = re.compile(r"```console\n(.*?)```", re.S)
PROMPT = "$ treequery "


@dataclass(frozen=True)
class Example:
    command: str      # the words after `treequery`, as written
    expected: str     # the output written under it
    line: int         # 1-based line of the command in the reference


def _split(lines: list[str]) -> list[tuple[int, str, list[str]]]:
    """(index, command, output lines) per command; a quote left open continues the command."""
    found: list[tuple[int, str, list[str]]] = []
    i = 0
    while i < len(lines):
        if not lines[i].startswith(PROMPT):
            if found:
                found[-1][2].append(lines[i])
            i += 1
            continue
        start, command = i, lines[i][len(PROMPT):]
        while not _complete(command) and i + 1 < len(lines):
            i += 1
            command += "\n" + lines[i]
        found.append((start, command, []))
        i += 1
    return found


def _complete(command: str) -> bool:
    try:
        shlex.split(command)
    except ValueError:  # an open quote: the command goes on on the next line
        return False
    return True


def examples(text: str) -> list[Example]:
    found = []
    for block in BLOCK.finditer(text):
        first_line = text.count("\n", 0, block.start(1)) + 1
        for index, command, output in _split(block.group(1).split("\n")[:-1]):
            found.append(Example(command, "\n".join(output), first_line + index))
    return found


def run(command: str) -> str:
    """The output of one `treequery ...` command line, as a user's terminal shows it."""
    from treequery.cli import main

    result = CliRunner().invoke(main, shlex.split(command))
    return (result.output).rstrip("\n")


def update(document: Path) -> int:
    text = document.read_text(encoding="utf-8")

    def fill(block: re.Match) -> str:
        out = []
        for _, command, _ in _split(block.group(1).split("\n")[:-1]):
            out.append(PROMPT + command)
            out.extend(run(command).split("\n"))
        return "```console\n" + "\n".join(out) + "\n```"

    document.write_text(BLOCK.sub(fill, text), encoding="utf-8")
    return len(examples(text))


if __name__ == "__main__":
    if sys.argv[1:] == ["--update"]:
        sys.path.insert(0, str(ROOT))
        for document in DOCUMENTS:
            print(f"rewrote the output of {update(document)} examples in {document}")
    else:
        print(__doc__)
