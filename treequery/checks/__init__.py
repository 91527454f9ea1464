"""Annotation consistency checks: variation nuclei, tag variation and rules files."""
from __future__ import annotations

from .evaluate import RuleOutcome, Violation, run_rules
from .report import outcomes_to_json, outcomes_to_text, variations_to_json, variations_to_text
from .rules import Rule, RulesFile, RulesFileError, parse_rules, read_rules
from .tags import find_tag_variation
from .variation import NIL, Occurrence, Variation, find_variation_nuclei

__all__ = [
    "NIL",
    "Occurrence",
    "Rule",
    "RuleOutcome",
    "RulesFile",
    "RulesFileError",
    "Variation",
    "Violation",
    "find_tag_variation",
    "find_variation_nuclei",
    "outcomes_to_json",
    "outcomes_to_text",
    "parse_rules",
    "read_rules",
    "run_rules",
    "variations_to_json",
    "variations_to_text",
]
