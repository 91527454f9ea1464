"""Which files to read: paths, directories and globs expanded; hashes; sidecar metadata."""
from __future__ import annotations

import glob
import hashlib
from collections.abc import Iterable
from functools import lru_cache
from pathlib import Path

from treequery.errors import TreebankFormatError, TreequeryError

METADATA_FILE = "documents.tsv"
_GLOB_CHARS = set("*?[")


class NoInputFiles(TreequeryError, FileNotFoundError):
    """A path that does not exist or a pattern that matches no file."""

    def __init__(self, pattern: str, message: str):
        self.pattern = pattern
        super().__init__(f"{message}: {pattern}")


def expand_paths(paths: Iterable[str | Path]) -> list[Path]:
    """Files named, files under directories (recursively) and files matching globs.

    Hidden files and folders and the `documents.tsv` sidecars are left out of
    directories. The result is sorted and free of duplicates; a path that does not
    exist or a glob that matches nothing raises NoInputFiles naming it.
    """
    found: set[Path] = set()
    for given in paths:
        text = str(given)
        if Path(text).exists():
            found.update(_expand_one(Path(text)))
        elif _GLOB_CHARS & set(text):
            matches = [Path(match) for match in glob.glob(text, recursive=True)]
            files = {file for match in matches for file in _expand_one(match)}
            if not files:
                raise NoInputFiles(text, "no file matches the pattern")
            found.update(files)
        else:
            raise NoInputFiles(text, "no such file or directory")
    return sorted(found)


def _expand_one(path: Path) -> list[Path]:
    if path.is_file():
        return [path]
    if not path.is_dir():
        return []
    return [file for file in path.rglob("*") if file.is_file() and _wanted(file.relative_to(path))]


# Inside a directory only files with these extensions (optionally + .gz) are
# treebank files; READMEs, licences and rule files beside them are left alone.
# A file named explicitly or through a glob is always read, whatever its name.
TREEBANK_SUFFIXES = frozenset({".mrg", ".ptb", ".tree", ".trees", ".penn", ".bracketed", ".psd"})


def _wanted(relative: Path) -> bool:
    """Treebank files of a directory, without hidden files and sidecars."""
    if relative.name == METADATA_FILE or any(part.startswith(".") for part in relative.parts):
        return False
    suffixes = relative.suffixes
    if suffixes and suffixes[-1] == ".gz":
        suffixes = suffixes[:-1]
    return bool(suffixes) and suffixes[-1].lower() in TREEBANK_SUFFIXES


def file_sha256(path: str | Path) -> str:
    """The SHA-256 of the bytes on disk, read in chunks."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for chunk in iter(lambda: handle.read(1 << 20), b""):
            digest.update(chunk)
    return digest.hexdigest()


def document_metadata(path: str | Path) -> dict[str, str]:
    """The row for this file in the `documents.tsv` of its directory, or {}.

    The sidecar is tab-separated with a header row `file<TAB>key1<TAB>key2...` and one
    row per file name of that directory; empty values are left out.
    """
    path = Path(path)
    sidecar = path.parent / METADATA_FILE
    if not sidecar.is_file():
        return {}
    stat = sidecar.stat()
    return dict(_read_sidecar(str(sidecar), stat.st_mtime_ns, stat.st_size).get(path.name, ()))


@lru_cache(maxsize=64)
def _read_sidecar(sidecar: str, mtime_ns: int, size: int) -> dict[str, tuple[tuple[str, str], ...]]:
    """Parse a sidecar once per version of it (mtime and size are the cache key)."""
    rows: dict[str, tuple[tuple[str, str], ...]] = {}
    with open(sidecar, encoding="utf-8") as handle:
        lines = (line.rstrip("\r\n") for line in handle)
        header = next(lines, "").split("\t")
        if header[0] != "file":
            raise TreebankFormatError("the header row must start with the column 'file'",
                                      sidecar, 1, 1, "file<TAB>key1<TAB>key2...")
        for line_no, line in enumerate(lines, 2):
            if not line.strip():
                continue
            values = line.split("\t")
            if len(values) > len(header):
                raise TreebankFormatError(
                    f"{len(values)} fields but the header has {len(header)}", sidecar,
                    line_no, 1, f"at most {len(header)} tab-separated fields")
            if values[0] in rows:
                raise TreebankFormatError(f"a second row for {values[0]!r}", sidecar, line_no,
                                          1, "one row per file")
            # a short row leaves the last keys out, like empty values
            pairs = zip(header[1:], values[1:], strict=False)
            rows[values[0]] = tuple((key, value) for key, value in pairs if value != "")
    return rows
