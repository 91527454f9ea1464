"""The `check` command group: variation nuclei, tag variation and rules files."""
from __future__ import annotations

import json
import sys

import click

from .api import Treebank
from .cli_errors import TreequeryGroup
from .checks.evaluate import run_rules
from .checks.report import (
    outcomes_to_json,
    outcomes_to_text,
    variations_to_json,
    variations_to_text,
)
from .checks.rules import RulesFileError, read_rules
from .checks.tags import find_tag_variation
from .checks.variation import find_variation_nuclei
from .errors import PatternError

EXIT_RULE_FAILED = 1


class CheckGroup(TreequeryGroup):
    """Errors to exit codes, also when the group runs on its own; a bad rules file exits 2."""

    bad_input_errors = (RulesFileError, PatternError)


def _open(db: str | None) -> Treebank:
    return Treebank(db, readonly=db is not None)


db_option = click.option(
    "--db", "db", type=click.Path(dir_okay=False), default=None,
    help="Index file (default: the bundled demo treebank, built on first use).")
format_option = click.option("--format", "fmt", type=click.Choice(["text", "json"]),
                             default="text", show_default=True)
corpus_option = click.option("--corpus", "corpora", multiple=True, metavar="NAME",
                             help="Only this corpus (repeatable).")
document_option = click.option(
    "--document", "documents", multiple=True, metavar="NAME",
    help="Only documents whose file name or path matches (glob; repeatable).")
context_option = click.option(
    "--min-context", type=click.IntRange(min=0), default=1, show_default=True,
    help="Report only variation with at least this many identical words around it, "
         "shared by two differently annotated occurrences.")
fringe_option = click.option(
    "--non-fringe", is_flag=True,
    help="Require shared context on both sides (at least one word left and right).")
limit_option = click.option("--limit", type=click.IntRange(min=0), default=None,
                            help="Show only the first N variations.")


@click.group(cls=CheckGroup)
def check() -> None:
    """Find inconsistent annotation: variation nuclei, tag variation, rules files."""


@check.command()
@db_option
@click.option("--max-length", type=click.IntRange(min=1), default=6, show_default=True,
              help="Longest word string considered, in overt words.")
@click.option("--min-length", type=click.IntRange(min=1), default=1, show_default=True,
              help="Shortest word string considered.")
@context_option
@fringe_option
@click.option("--category", "categories", multiple=True, metavar="CAT",
              help="Only strings that are a constituent of this category somewhere (repeatable).")
@click.option("--functions", "with_functions", is_flag=True,
              help="Compare labels with their function tags (NP-TMP differs from NP).")
@corpus_option
@document_option
@limit_option
@format_option
def variation(db, max_length, min_length, min_context, non_fringe, categories, with_functions,
              corpora, documents, limit, fmt) -> None:
    """Word strings that are a constituent somewhere and recur with another label or as none."""
    if min_length > max_length:
        raise click.BadParameter("--min-length is larger than --max-length")
    with _open(db) as treebank:
        found = find_variation_nuclei(
            treebank.conn, max_length=max_length, min_length=min_length,
            min_context=min_context, non_fringe=non_fringe, categories=categories,
            corpora=corpora, documents=documents, with_functions=with_functions)
    options = {"max_length": max_length, "min_length": min_length, "min_context": min_context,
               "non_fringe": non_fringe, "categories": list(categories),
               "functions": with_functions, "corpora": list(corpora),
               "documents": list(documents)}
    _print_variations(found[:limit] if limit is not None else found, "variation", options, fmt)


@check.command()
@db_option
@context_option
@fringe_option
@click.option("--tag", "tags", multiple=True, metavar="TAG",
              help="Only words that carry this tag somewhere (repeatable).")
@corpus_option
@document_option
@limit_option
@format_option
def tags(db, min_context, non_fringe, tags, corpora, documents, limit, fmt) -> None:
    """Words with different part-of-speech tags in the same context."""
    with _open(db) as treebank:
        found = find_tag_variation(treebank.conn, min_context=min_context,
                                   non_fringe=non_fringe, tags=tags, corpora=corpora,
                                   documents=documents)
    options = {"min_context": min_context, "non_fringe": non_fringe, "tags": list(tags),
               "corpora": list(corpora), "documents": list(documents)}
    _print_variations(found[:limit] if limit is not None else found, "tags", options, fmt)


def _print_variations(found, check_name: str, options: dict, fmt: str) -> None:
    if fmt == "json":
        document = variations_to_json(found, check_name, options)
        click.echo(json.dumps(document, ensure_ascii=False, indent=2))
    else:
        click.echo(variations_to_text(found))


@check.command()
@click.argument("rules_file", type=click.Path(dir_okay=False))
@db_option
@click.option("--flat", is_flag=True, help="Print violating trees on one line.")
@click.option("--no-trees", is_flag=True, help="Do not print the violating trees (text format).")
@format_option
def rules(rules_file, db, flat, no_trees, fmt) -> None:
    """Check the rules of RULES_FILE; exit 1 if any fails, 2 if the file is malformed."""
    parsed = read_rules(rules_file)  # the whole file is checked before anything runs
    with _open(db) as treebank:
        outcomes = run_rules(treebank, parsed.rules, flat=flat)
    if fmt == "json":
        click.echo(json.dumps(outcomes_to_json(outcomes, rules_file), ensure_ascii=False,
                              indent=2))
    else:
        click.echo(outcomes_to_text(outcomes, show_trees=not no_trees))
    if not all(outcome.passed for outcome in outcomes):
        sys.exit(EXIT_RULE_FAILED)
