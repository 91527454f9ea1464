"""The command line: parse options, call the Python API, print. Nothing else lives here."""
from __future__ import annotations

import csv
import functools
import json
import sys
from contextlib import contextmanager
from pathlib import Path

import click

from .api import Treebank
from .cli_errors import EXIT_FAILURE, TreequeryGroup
from .frequency import present
from .frequency.breakdown import BreakdownError
from .results.brackets import marked_brackets
from .results.display import Painter, location, shown_path, tree_location, use_color
from .results.kwic import DEFAULT_WIDTH
from .results.kwic import kwic_var as pick_kwic_var
from .results.render import FORMATS, OutputOptions, header, render
from .results.svg import file_name as svg_file_name
from .results.svg import html_page, result_svg, tree_svg
from .results.textart import draw_tree

DRAW_LIMIT = 20


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
    treebank = Treebank(db, readonly=readonly and db is not None)
    treebank.allow_interrupt()
    return treebank


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
@click.option("--head-rules", "head_rules", type=click.Path(dir_okay=False, exists=True),
              default=None, help="Head-rule file (default: the rules the index has, "
              "else Collins 1999); stored in the index.")
def index(db, paths, corpus, meta, strict, report_file, quiet, head_rules) -> None:
    """Index bracketed treebank files, directories or globs into DB."""
    metadata = {}
    for item in meta:
        key, sep, value = item.partition("=")
        if not sep or not key:
            raise click.BadParameter(f"{item!r} is not KEY=VALUE", param_hint="--meta")
        metadata[key] = value
    with Treebank(db) as treebank:
        report = treebank.index(paths, corpus=corpus, meta=metadata, strict=strict,
                                progress=not quiet, report_file=report_file,
                                head_rules=head_rules)
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


def output_options(formats: tuple[str, ...], default: str):
    """The options every command that prints results shares, with the same meaning.

    `--format` picks the view; `--color` and `--width`, `--kwic-var`, `--whole`
    tune the views that use them and are ignored by the others.
    """
    def decorate(command):
        for option in reversed([
            click.option("--format", "fmt", type=click.Choice(formats), default=default,
                         show_default=True, help="How to print each result."),
            click.option("--color", type=click.Choice(["auto", "always", "never"]),
                         default="auto", show_default=True,
                         help="Colour the bound nodes (auto: on a terminal, unless NO_COLOR)."),
            click.option("--width", type=click.IntRange(0), default=DEFAULT_WIDTH,
                         show_default=True,
                         help="kwic: characters of context on each side (0: whole sentences, "
                              "not aligned)."),
            click.option("--kwic-var", default=None, metavar="VAR",
                         help="kwic: the variable whose words are the match (default: the "
                              "first result variable)."),
            click.option("--whole", is_flag=True,
                         help="brackets/tree: show the whole tree, not the matched subtree."),
        ]):
            command = option(command)
        return command
    return decorate


def paging_options(command):
    """--limit, --offset, --sample/--seed and --sort, for every command that lists results."""
    for option in reversed([
        click.option("--limit", type=click.IntRange(0), default=None,
                     help="At most this many results."),
        click.option("--offset", type=click.IntRange(0), default=0,
                     help="Skip this many results first."),
        click.option("--sample", type=click.IntRange(0), default=None, metavar="N",
                     help="A uniform random sample of N results (in corpus order)."),
        click.option("--seed", type=int, default=None,
                     help="Seed for --sample: the same seed gives the same sample."),
        click.option("--sort", default=None, metavar="[-]VAR.ATTR",
                     help="Order by an attribute of a result variable, e.g. o.tokens "
                          "(-o.tokens: largest first). Default: corpus order."),
    ]):
        command = option(command)
    return command


def make_output(fmt: str, color: str, width: int, kwic_var: str | None, whole: bool,
                result_vars) -> OutputOptions:
    if kwic_var is not None:
        kwic_var = pick_kwic_var(result_vars, kwic_var)
    return OutputOptions(fmt, use_color(color), width, kwic_var, whole)


@main.command()
@db_option
@click.argument("tree_id", type=int, required=False)
@click.option("--at", "at", metavar="FILE:LINE", default=None,
              help="The tree spanning this line of this file (the path may be relative or "
                   "its last parts, e.g. wsj_0001.mrg:12).")
@click.option("--format", "fmt", type=click.Choice(["brackets", "tree", "svg"]),
              default="brackets", show_default=True,
              help="Indented brackets, text art, or an SVG drawing.")
@click.option("--flat", is_flag=True, help="brackets: the tree on one line.")
@click.option("--color", type=click.Choice(["auto", "always", "never"]), default="auto",
              show_default=True, help="Dim the location line on a terminal.")
def show(db, tree_id, at, fmt, flat, color) -> None:
    """Print tree number TREE_ID (or the tree at --at FILE:LINE) with its location."""
    if (tree_id is None) == (at is None):
        raise click.UsageError("give a tree number or --at FILE:LINE (one of them)")
    with open_treebank(db) as treebank:
        if at is not None:
            tree_id = treebank.tree_at(*split_at(at))
        where = treebank.tree_location(tree_id)
        tree = treebank.tree(tree_id)
    painter = Painter(use_color(color), {})
    caption = tree_location(where, tree_id)
    if fmt == "svg":
        click.echo(tree_svg(tree, {}, caption))
        return
    # The tree's number first: it is what `show` was asked for; file:line ends the line.
    echo = functools.partial(click.echo, color=painter.color)
    echo(painter.dim(f"# tree {tree_id}  {shown_path(where['path'])}:{where['line']}"))
    if fmt == "tree":
        echo(draw_tree(tree, {}, painter))
    else:
        echo(marked_brackets(tree, {}, painter, indent=not flat))


def split_at(text: str) -> tuple[str, int]:
    path, _, line = text.rpartition(":")
    if not path or not line.isdigit() or int(line) < 1:
        raise click.BadParameter(f"{text!r} is not FILE:LINE", param_hint="--at")
    return path, int(line)


@main.command()
@click.argument("pattern", required=False)
@pattern_file_option
@db_option
@paging_options
@output_options(FORMATS, "text")
@click.option("--out", "out_dir", type=click.Path(file_okay=False), default=None,
              help="treebank: write the matched trees into this folder (one file per source "
                   "file and a trees.tsv manifest) instead of printing them.")
@count_empty_option
@timeout_option
def find(pattern, pattern_file, db, limit, offset, sample, seed, sort, fmt, color, width,
         kwic_var, whole, out_dir, count_empty, timeout) -> None:
    """Print every result of PATTERN with its location (file:line and tree number).

    \b
    Formats: text      one line per result: location, each variable's label and words
             kwic      concordance: left context | match | right context
             brackets  the matched subtree (--whole: the tree), bound nodes as name:LABEL
             tree      the same drawn as text art
             json      JSON Lines, one object per result
             csv, tsv  one row per result, columns per variable
             treebank  each matched tree once, in bracket notation (see --out)
    """
    text = read_pattern(pattern, pattern_file)
    with open_treebank(db) as treebank:
        result_vars = treebank.result_vars(text)
        options = make_output(fmt, color, width, kwic_var, whole, result_vars)
        results = treebank.find(text, limit=limit, offset=offset, count_empty=count_empty,
                                timeout=timeout, sample=sample, seed=seed, sort=sort)
        if fmt == "treebank":
            export_trees(treebank, results, out_dir)
            return
        echo_results(treebank, results, options, result_vars)


def echo_results(treebank: Treebank, results, options: OutputOptions, result_vars) -> None:
    """Print each result as soon as the search yields it (click.echo flushes each line)."""
    first = header(options, result_vars)
    if first is not None:
        click.echo(first)
    tree_of = functools.lru_cache(maxsize=64)(treebank.tree)
    for result in results:
        # color=True: click would strip the codes when stdout is not a terminal.
        click.echo(render(result, tree_of, options, result_vars), color=options.color)


def export_trees(treebank: Treebank, results, out_dir: str | None) -> None:
    if out_dir is None:
        treebank.export_subtreebank(results, sys.stdout)
        return
    exported = treebank.export_subtreebank(results, out_dir)
    files = len({tree.file for tree in exported})
    click.echo(f"wrote {len(exported)} trees into {files} files in {out_dir} "
               f"(manifest: {out_dir}/trees.tsv)", err=True)


@main.command()
@click.argument("pattern", required=False)
@pattern_file_option
@db_option
@click.option("--out", "out_dir", type=click.Path(file_okay=False), required=True,
              help="Folder for the drawings (created if missing).")
@paging_options
@click.option("--html", is_flag=True,
              help="One page, DIR/index.html, with every drawing, instead of one SVG each.")
@count_empty_option
@timeout_option
def draw(pattern, pattern_file, db, out_dir, limit, offset, sample, seed, sort, html,
         count_empty, timeout) -> None:
    """Draw the tree of each result of PATTERN as SVG, bound nodes highlighted and named.

    Without --limit, the first 20 results are drawn.
    """
    text = read_pattern(pattern, pattern_file)
    folder = Path(out_dir)
    folder.mkdir(parents=True, exist_ok=True)
    limit = DRAW_LIMIT if limit is None else limit
    with open_treebank(db) as treebank:
        results = treebank.find(text, limit=limit, offset=offset, count_empty=count_empty,
                                timeout=timeout, sample=sample, seed=seed, sort=sort)
        drawings = []
        for number, result in enumerate(results, 1):
            svg = result_svg(result, treebank.tree(result.tree_id), text)
            if html:
                drawings.append((result, svg))
                continue
            target = folder / svg_file_name(number, result)
            target.write_text(svg + "\n", encoding="utf-8")
            click.echo(f"{target}  # {location(result)}")
    if html:
        target = folder / "index.html"
        target.write_text(html_page(drawings, " ".join(text.split())), encoding="utf-8")
        click.echo(f"{target}  ({len(drawings)} drawings)")


by_option = click.option(
    "--by", "by", multiple=True, metavar="VAR.ATTR",
    help="Group counts by an attribute of a result variable (repeatable).")
chart_option = click.option(
    "--chart", "chart_file", type=click.Path(dir_okay=False), default=None, metavar="FILE.svg",
    help="Also draw the results per million tokens as a bar chart (SVG) into this file.")


@main.command()
@click.argument("pattern", required=False)
@pattern_file_option
@db_option
@by_option
@click.option("--per", "per", default=None, metavar="corpus|document|META_KEY",
              help="Break the counts down by corpus, document or a metadata key (e.g. genre): "
                   "normalised frequencies, range and dispersion per cell.")
@click.option("--patterns", "patterns_file", type=click.Path(dir_okay=False, exists=True),
              default=None, metavar="FILE",
              help="Count every named pattern of a pattern-set file (instead of PATTERN).")
@click.option("--format", "fmt", type=click.Choice(present.FORMATS), default="table")
@chart_option
@count_empty_option
@timeout_option
def count(pattern, pattern_file, db, by, per, patterns_file, fmt, chart_file, count_empty,
          timeout) -> None:
    """Count the results of PATTERN and the trees they are in.

    With --per or --patterns (or --chart), one row per cell (and pattern, and --by
    group) with stable columns: see README.md, "Counting and comparing".
    """
    if patterns_file is None and per is None and chart_file is None:
        text = read_pattern(pattern, pattern_file)
        with open_treebank(db) as treebank:
            counted = treebank.count(text, by=by, count_empty=count_empty, timeout=timeout)
        echo_count(counted, by, fmt)
        return
    if patterns_file is not None and (pattern is not None or pattern_file is not None):
        raise click.UsageError("give PATTERN (or -f) or --patterns FILE, not both")
    with open_treebank(db) as treebank, bad_frequency_input():
        if patterns_file is not None:
            table = treebank.pattern_frequencies(patterns_file, by=by, per=per,
                                                 count_empty=count_empty, timeout=timeout)
            subject = Path(patterns_file).name
        else:
            text = read_pattern(pattern, pattern_file)
            table = treebank.frequencies(text, by=by, per=per, count_empty=count_empty,
                                         timeout=timeout)
            subject = " ".join(text.split())
    echo_frequencies(table, fmt, present.frequency_table_text)
    if chart_file is not None:
        title = f"{subject}: results per million tokens" + (f", by {per}" if per else "")
        write_chart(chart_file, present.frequency_chart(table, title))


@main.command()
@click.argument("pattern", required=False)
@pattern_file_option
@db_option
@click.option("--between", "sides", nargs=2, required=True, metavar="SIDE SIDE",
              help="The two sides: corpus:NAME, document:NAME, index:PATH or KEY:VALUE "
                   "(a metadata value, e.g. genre:letter).")
@by_option
@click.option("--format", "fmt", type=click.Choice(present.FORMATS), default="table")
@chart_option
@count_empty_option
@timeout_option
def compare(pattern, pattern_file, db, sides, by, fmt, chart_file, count_empty,
            timeout) -> None:
    """Compare how often PATTERN occurs on two sides: counts, normalised frequencies,
    log-likelihood G² with its p-value, and the log ratio (per --by group, largest G² first).
    """
    text = read_pattern(pattern, pattern_file)
    with open_treebank(db) as treebank, bad_frequency_input():
        compared = treebank.compare(text, *sides, by=by, count_empty=count_empty,
                                    timeout=timeout)
    echo_frequencies(compared, fmt, present.comparison_text)
    if chart_file is not None:
        title = f"{' '.join(text.split())}: {sides[0]} vs {sides[1]}, per million tokens"
        write_chart(chart_file, present.comparison_chart(compared, title))


@contextmanager
def bad_frequency_input():
    """A breakdown key or comparison side the index cannot answer is bad input (exit 2)."""
    try:
        yield
    except BreakdownError as error:
        raise click.UsageError(str(error)) from None


def echo_count(counted, by, fmt: str) -> None:
    """The plain count (no breakdown) in the format asked for."""
    if fmt == "json":
        click.echo(json.dumps(counted.to_json(), ensure_ascii=False, indent=2))
    elif fmt in ("csv", "tsv"):
        writer = csv.writer(sys.stdout, lineterminator="\n",
                            delimiter="," if fmt == "csv" else "\t")
        writer.writerow([*by, "results"] if by else ["results", "trees"])
        if by:
            for group in counted.groups:
                writer.writerow([*group.key, group.results])
        else:
            writer.writerow([counted.results, counted.trees])
    else:
        click.echo(count_to_table(counted))


def echo_frequencies(data, fmt: str, as_table) -> None:
    if fmt == "json":
        click.echo(present.json_text(data))
    elif fmt in ("csv", "tsv"):
        present.write_rows(data.columns, data.records(), sys.stdout,
                           "," if fmt == "csv" else "\t")
    else:
        click.echo(as_table(data))


def write_chart(chart_file: str, svg: str) -> None:
    Path(chart_file).write_text(svg, encoding="utf-8")
    click.echo(f"chart: {chart_file}", err=True)


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
from .cli_serve import serve  # noqa: E402 - imports the web packages only when run
main.add_command(serve)

if __name__ == "__main__":
    main()
