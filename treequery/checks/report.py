"""Text and JSON output of the consistency checks, kept apart from finding things."""
from __future__ import annotations

from dataclasses import asdict

from .evaluate import RuleOutcome
from .model import Variation
from ..results.model import display_path

CONCORDANCE_CHARS = 40  # characters of context shown on each side in text output


def variations_to_json(variations: list[Variation], check: str, options: dict) -> dict:
    """One JSON document: the check, its options and every variation with its occurrences."""
    return {
        "check": check,
        "options": options,
        "variations": [_variation_json(v) for v in variations],
    }


def _variation_json(variation: Variation) -> dict:
    return {
        "kind": variation.kind,
        "words": variation.words,
        "length": variation.length,
        "labels": [{"label": label, "count": count} for label, count in variation.labels],
        "context": {
            "size": variation.context,
            "left": variation.context_left,
            "right": variation.context_right,
            "fringe": variation.fringe,
            "text": variation.context_text,
        },
        "occurrences": [asdict(occurrence) for occurrence in variation.occurrences],
    }


def variations_to_text(variations: list[Variation]) -> str:
    """A numbered block per variation; '*' marks the occurrences sharing the widest context."""
    if not variations:
        return "no variation found"
    blocks = [_variation_text(number, variation)
              for number, variation in enumerate(variations, start=1)]
    one, many = (("variation nucleus", "variation nuclei") if variations[0].kind == "nucleus"
                 else ("tag variation", "tag variations"))
    blocks.append(f"{len(variations)} {one if len(variations) == 1 else many}")
    return "\n\n".join(blocks)


def _variation_text(number: int, variation: Variation) -> str:
    labels = ", ".join(f"{label} {count}" for label, count in variation.labels)
    sides = f"{variation.context_left} left, {variation.context_right} right"
    fringe = ", fringe" if variation.fringe else ""
    lines = [
        f'{number}. "{variation.words}"  {labels}',
        f"   context {variation.context} ({sides}{fringe}): {variation.context_text}",
    ]
    width = max(len(o.label) for o in variation.occurrences)
    for occurrence in variation.occurrences:
        mark = "*" if occurrence.shared else " "
        left = occurrence.left[-CONCORDANCE_CHARS:]
        right = occurrence.right[:CONCORDANCE_CHARS]
        lines.append(f"   {mark} {occurrence.location}  tree {occurrence.tree_id}"
                     f"  {occurrence.label:<{width}}  {left:>{CONCORDANCE_CHARS}}"
                     f" [{occurrence.words}] {right}".rstrip())
    return "\n".join(lines)


def outcomes_to_json(outcomes: list[RuleOutcome], rules_path: str) -> dict:
    """One JSON document with every rule's outcome and violations."""
    return {
        "rules_file": rules_path,
        "passed": all(outcome.passed for outcome in outcomes),
        "rules": [_outcome_json(outcome) for outcome in outcomes],
    }


def _outcome_json(outcome: RuleOutcome) -> dict:
    rule = outcome.rule
    return {
        "name": rule.name,
        "line": rule.line,
        "expect": rule.expectation_text,
        "message": rule.message,
        "passed": outcome.passed,
        "matches": outcome.matches,
        "summary": outcome.summary,
        "violations": [asdict(violation) for violation in outcome.violations],
    }


def outcomes_to_text(outcomes: list[RuleOutcome], show_trees: bool = True) -> str:
    """Each rule with PASS or FAIL, then each violation with its location and marked tree."""
    lines = []
    for outcome in outcomes:
        rule = outcome.rule
        status = "PASS" if outcome.passed else "FAIL"
        lines.append(f"{status}  {rule.name}  ({rule.expectation_text}): {outcome.summary}")
        if outcome.passed:
            continue
        lines.append(f"      {rule.message}")
        for violation in outcome.violations:
            nodes = "  ".join(f'{node.var}={node.label} "{node.words}"' for node in violation.nodes)
            where = f"{display_path(violation.path)}:{violation.line}"
            lines.append(f"  {where}  tree {violation.tree_id}"
                         f" (#{violation.ordinal} in {violation.document})  {nodes}".rstrip())
            if show_trees:
                lines.extend("    " + row for row in violation.tree.splitlines())
    failed = sum(not outcome.passed for outcome in outcomes)
    lines.append(f"{len(outcomes)} rules, {failed} failed")
    return "\n".join(lines)
