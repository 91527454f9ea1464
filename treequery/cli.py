"""The command line: parse options, call the Python API, print. Nothing else lives here."""
from __future__ import annotations

import csv
import json
import sys

import click

from .api import Treebank
from .errors import PatternError, SearchTimeout, TreequeryError

EXIT_FAILURE = 1
EXIT_BAD_PATTERN = 2


class TreequeryGroup(click.Group):
    """Turns library errors into messages and exit codes, in one place."""

    def invoke(self, ctx: click.Context):
        try:
            return super().invoke(ctx)
        except PatternError as error:
            click.echo(error.render(), err=True)
            ctx.exit(EXIT_BAD_PATTERN)
        except SearchTimeout as error:
            click.echo(f"stopped: {error}", err=True)
            ctx.exit(EXIT_FAILURE)
        except (TreequeryError, FileNotFoundError) as error:
            click.echo(f"error: {error}", err=True)
            ctx.exit(EXIT_FAILURE)
        except KeyboardInterrupt:
            click.echo("interrupted", err=True)
            ctx.exit(130)
        except BrokenPipeError:  # `treequery find ... | head`
            sys.stderr.close()
            ctx.exit(0)


db_option = click.option(
    "--db", "db", type=click.Path(dir_okay=False), default=None,
    help="Index file (default: the bundled demo treebank, built on first use).")
pattern_file_option = click.option(
    "-f", "--file", "pattern_file", type=click.File("r", encoding="utf-8"), default=None,
    help="Read the pattern from this file ('-' for standard input).")
count_empty_option = click.option(
    "--count-empty", is_flag=True,
    help="Let empty elements count as tokens for precedence and adjacency.")
timeout_option = click.option(
    "--timeout", type=float, default=None, help="Stop the search after this many seconds.")


def read_pattern(pattern: str | None, pattern_file) -> str:
    """The pattern from the argument, from -f FILE, or from standard input."""
    if pattern is not None and pattern_file is not None:
        raise click.UsageError("give the pattern as an argument or with -f, not both")
    if pattern_file is not None:
        return pattern_file.read()
    if pattern is None or pattern == "-":
        if sys.stdin.isatty():
            raise click.UsageError("give a pattern, e.g. treequery find 'VP parent-of PP'")
        return sys.stdin.read()
    return pattern


def open_treebank(db: str | None, readonly: bool = True) -> Treebank:
    return Treebank(db, readonly=readonly and db is not None)


@click.group(cls=TreequeryGroup)
@click.version_option(package_name="treequery")
def main() -> None:
    """Search, count and check constituency treebanks."""


@main.command()
@click.option("--db", "db", type=click.Path(dir_okay=False), required=True,
              help="Index file to create or update.")
@click.argument("paths", nargs=-1, required=True)
@click.option("--corpus", default="default", show_default=True, help="Corpus name for these files.")
@click.option("--meta", multiple=True, metavar="KEY=VALUE", help="Document metadata (repeatable).")
@click.option("--strict", is_flag=True, help="Stop at the first bad tree instead of skipping it.")
@click.option("--report", "report_file", type=click.Path(dir_okay=False), default=None,
              help="Write the list of skipped trees to this file.")
@click.option("--quiet", is_flag=True, help="No progress bar.")
def index(db, paths, corpus, meta, strict, report_file, quiet) -> None:
    """Index bracketed treebank files, directories or globs into DB."""
    metadata = {}
    for item in meta:
        key, sep, value = item.partition("=")
        if not sep or not key:
            raise click.BadParameter(f"{item!r} is not KEY=VALUE", param_hint="--meta")
        metadata[key] = value
    with Treebank(db) as treebank:
        report = treebank.index(paths, corpus=corpus, meta=metadata, strict=strict,
                                progress=not quiet, report_file=report_file)
    click.echo(report.summary())
    for skipped in report.skipped[:20]:
        click.echo(f"  skipped {skipped.source}:{skipped.line}:{skipped.column}: {skipped.message}",
                   err=True)
    if len(report.skipped) > 20:
        click.echo(f"  ... and {len(report.skipped) - 20} more (use --report FILE)", err=True)
    for path, message in report.failed_files:
        click.echo(f"  failed {path}: {message}", err=True)
    if report.failed_files:
        sys.exit(EXIT_FAILURE)


@main.command()
@db_option
@click.option("--format", "fmt", type=click.Choice(["text", "json"]), default="text")
def info(db, fmt) -> None:
    """Corpora, documents, trees, tokens, nodes and the label inventory."""
    with open_treebank(db) as treebank:
        facts = treebank.info()
    if fmt == "json":
        click.echo(json.dumps(facts, indent=2, ensure_ascii=False))
        return
    for key in ("documents", "trees", "tokens", "empty_elements", "nodes", "skipped"):
        if key in facts:
            click.echo(f"{key.replace('_', ' '):<16}{facts[key]:>12,}")
    for corpus in facts.get("corpora", []):
        click.echo(f"corpus {corpus['name']}: {corpus['documents']} documents, "
                   f"{corpus['trees']} trees")
    labels = facts.get("labels", {})
    if labels:
        click.echo("labels (category: nodes)")
        for name, count in labels.items():
            shown = name or "''"  # the unlabelled outer bracket
            click.echo(f"  {shown:<12}{count:>10,}")


@main.command()
@db_option
@click.argument("tree_id", type=int)
@click.option("--flat", is_flag=True, help="Print the tree on one line.")
def show(db, tree_id, flat) -> None:
    """Print tree number TREE_ID in bracket notation, with its location."""
    with open_treebank(db) as treebank:
        where = treebank.tree_location(tree_id)
        click.echo(f"# tree {tree_id}  {where['path']}:{where['line']}")
        click.echo(treebank.tree_brackets(tree_id, indent=not flat))


@main.command()
@click.argument("pattern", required=False)
@pattern_file_option
@db_option
@click.option("--limit", type=int, default=None, help="At most this many results.")
@click.option("--offset", type=int, default=0, help="Skip this many results first.")
@click.option("--format", "fmt", type=click.Choice(["text", "json", "csv"]), default="text")
@count_empty_option
@timeout_option
def find(pattern, pattern_file, db, limit, offset, fmt, count_empty, timeout) -> None:
    """Print every result of PATTERN with its location."""
    text = read_pattern(pattern, pattern_file)
    with open_treebank(db) as treebank:
        results = treebank.find(text, limit=limit, offset=offset, count_empty=count_empty,
                                timeout=timeout)
        if fmt == "json":
            for result in results:
                click.echo(json.dumps(result_to_json(result), ensure_ascii=False))
        elif fmt == "csv":
            write_csv(results, treebank.compile(text).result_vars)
        else:
            for result in results:
                click.echo(result_to_text(result))


@main.command()
@click.argument("pattern", required=False)
@pattern_file_option
@db_option
@click.option("--by", "by", multiple=True, metavar="VAR.ATTR",
              help="Group counts by an attribute of a result variable (repeatable).")
@click.option("--format", "fmt", type=click.Choice(["table", "json", "csv"]), default="table")
@count_empty_option
@timeout_option
def count(pattern, pattern_file, db, by, fmt, count_empty, timeout) -> None:
    """Count the results of PATTERN and the trees they are in."""
    text = read_pattern(pattern, pattern_file)
    with open_treebank(db) as treebank:
        counted = treebank.count(text, by=by, count_empty=count_empty, timeout=timeout)
    if fmt == "json":
        click.echo(json.dumps(counted.to_json(), ensure_ascii=False, indent=2))
    elif fmt == "csv":
        writer = csv.writer(sys.stdout, lineterminator="\n")
        writer.writerow([*by, "results"] if by else ["results", "trees"])
        if by:
            for group in counted.groups:
                writer.writerow([*group.key, group.results])
        else:
            writer.writerow([counted.results, counted.trees])
    else:
        click.echo(count_to_table(counted))


@main.command()
@click.argument("pattern", required=False)
@pattern_file_option
@db_option
@count_empty_option
def explain(pattern, pattern_file, db, count_empty) -> None:
    """Show how PATTERN is understood and run: AST, plan, SQL, SQLite's plan."""
    text = read_pattern(pattern, pattern_file)
    with open_treebank(db) as treebank:
        click.echo(treebank.explain(text, count_empty=count_empty))


# ------------------------------------------------------------------ presenting

def result_to_text(result) -> str:
    parts = [f"{result.location}", f"tree {result.tree_id}"]
    for name, node in result.bindings.items():
        shown = name if not name.startswith("_") else "match"
        parts.append(f'{shown}={node.label} "{node.words}"')
    return "  ".join(parts)


def result_to_json(result) -> dict:
    return {
        "tree": result.tree_id,
        "document": result.document,
        "file": result.path,
        "line": result.line,
        "ordinal": result.ordinal,
        "nodes": {
            name: {
                "id": node.id,
                "label": node.label,
                "category": node.category,
                "functions": node.functions,
                "span": [node.tok_first, node.tok_last],
                "words": node.words,
            }
            for name, node in result.bindings.items()
        },
    }


def write_csv(results, result_vars) -> None:
    writer = csv.writer(sys.stdout, lineterminator="\n")
    header = ["tree", "document", "file", "line"]
    for name in result_vars:
        header += [f"{name}.label", f"{name}.start", f"{name}.end", f"{name}.words"]
    writer.writerow(header)
    for result in results:
        row = [result.tree_id, result.document, result.path, result.line]
        for name in result_vars:
            node = result.bindings[name]
            row += [node.label, node.tok_first or "", node.tok_last or "", node.words]
        writer.writerow(row)


def plural(number: int, noun: str) -> str:
    return f"{number:,} {noun}{'' if number == 1 else 's'}"


def count_to_table(counted) -> str:
    total = f"{plural(counted.results, 'result')} in {plural(counted.trees, 'tree')}"
    if not counted.by:
        return total
    header = [*counted.by, "results"]
    rows = [[("" if v is None else str(v)) for v in g.key] + [f"{g.results:,}"]
            for g in counted.groups]
    widths = [max(len(r[i]) for r in [header, *rows]) for i in range(len(header))]
    lines = ["  ".join(cell.ljust(w) if i < len(header) - 1 else cell.rjust(w)
                       for i, (cell, w) in enumerate(zip(row, widths, strict=True)))
             for row in [header, *rows]]
    lines.insert(1, "  ".join("-" * w for w in widths))
    lines.append(total)
    return "\n".join(lines)


def _register_subgroups() -> None:
    from .cli_checks import check

    main.add_command(check)


_register_subgroups()

if __name__ == "__main__":
    main()
