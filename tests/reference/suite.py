"""The pattern suite: pattern texts covering every construct of the language reference.

Each pattern is run by the SQL engine and by the brute-force matcher on the demo
treebank, the WSJ sample and GUM (tests/test_differential.py) and timed by
tests/bench_patterns.py. The shapes are the usual ones of Treebank II annotation
(Bies, Ferguson, Katz & MacIntyre 1995: function tags such as SBJ, CLR, LOC, TMP;
empty elements -NONE- with *T* traces coindexed with WHNP; gapping with '=');
the exact patterns are our own.
"""
from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True, slots=True)
class SuitePattern:
    name: str
    text: str
    count_empty: bool = False
    # True when the language's definition says the pattern can never match
    # (two-valued logic, empty elements outside the token order, ...).
    expect_empty: bool = False
    # Constructs this pattern exercises (for the coverage check in the tests).
    covers: tuple[str, ...] = ()


def _p(name: str, text: str, *covers: str, count_empty: bool = False,
       expect_empty: bool = False) -> SuitePattern:
    return SuitePattern(name, text.strip("\n"), count_empty, expect_empty, covers)


SUITE: tuple[SuitePattern, ...] = (
    # ---------------------------------------------------------------- node tests
    _p("category", "SBAR", "test:category", "unnamed-only"),
    _p("category-function", "np:NP-SBJ", "test:function"),
    _p("category-two-functions", "pp:PP-LOC-CLR", "test:functions"),
    _p("empty-element", "e:-NONE-", "test:dash-label"),
    _p("dash-bracket-label", "p:PRN parent-of l:-LRB-", "test:dash-label", "rel:parent-of"),
    _p("quoted-category", "x:'ADVP|PRT'", "test:quoted"),
    _p("quoted-comma", "c:',' immediate-left-sister-of cc:CC", "test:quoted",
       "rel:immediate-left-sister-of"),
    _p("outer-bracket", "r:'' parent-of s:S", "test:quoted", "rel:parent-of"),
    _p("one-of", "x:NX|NAC|/^WH/", "test:one-of", "test:regex"),
    _p("regex", "w:/^WH/ parent-of n:/^W(DT|P)/", "test:regex"),
    _p("regex-value", "x:NN; x.word ~ /^[A-Z][a-z]+s$/", "value:regex", "op:~"),
    _p("label-not", "vp:VP parent-of x:!NP|PP|/^VB/|-NONE-", "test:not", "test:one-of"),
    _p("label-not-simple", "pp:PP parent-of x:!IN", "test:not"),
    _p("any-node", "x:* only-child-of np:NP", "test:any", "rel:only-child-of"),
    _p("word", 'v:VBD "said"', "test:word"),
    _p("word-any-tag", 'x:* "%"', "test:word", "test:any"),
    _p("word-escaped", 'x:* "("', "test:word-escaped"),
    _p("word-escaped-inside", 'x:* "(a)"', "test:word-escaped"),
    # ---------------------------------------------------------------- relations
    _p("dominates", "s:SBAR dominates e:-NONE-", "rel:dominates"),
    _p("dominated-by", "e:-NONE- dominated-by vp:VP", "rel:dominated-by"),
    _p("dominates-within", "vp:VP dominates n:NP within 2", "rel:within"),
    _p("dominates-at-depth", "s:S dominates v:/^VB/ at depth 2", "rel:at-depth"),
    _p("dominated-by-within", "v:VBD dominated-by s:S within 3", "rel:within", "rel:dominated-by"),
    _p("dominated-by-at-depth", "n:NN dominated-by s:S-TPC at depth 3", "rel:at-depth"),
    _p("child-of", "pp:PP-CLR child-of vp:VP", "rel:child-of"),
    _p("precedes-inversion", """
s:SINV { parent-of v:VP; parent-of n:NP-SBJ }
v precedes n
""", "rel:precedes", "block"),
    _p("follows", "n:NP-SBJ follows a:ADVP", "rel:follows"),
    _p("just-before", "d:DT just-before n:NN", "rel:just-before"),
    _p("just-after", "a:JJ just-after d:DT", "rel:just-after"),
    _p("empty-never-precedes", "t:-NONE- precedes v:VBD", "rel:precedes", "tokens:default",
       expect_empty=True),
    _p("empty-precedes-counted", "t:-NONE- precedes v:VBD", "rel:precedes", "tokens:empty",
       count_empty=True),
    _p("trace-adjacent", "w:WHNP just-before v:VP", "rel:just-before", "tokens:default"),
    _p("trace-adjacent-counted", "t:-NONE- just-before v:VP", "rel:just-before",
       "tokens:empty", count_empty=True),
    _p("subject-before-vp-counted", "n:NP-SBJ just-after w:/^WH/", "rel:just-after",
       "tokens:empty", count_empty=True),
    _p("sister-of", "a:NP-SBJ sister-of b:ADVP", "rel:sister-of"),
    _p("sister-of-symmetric", "a:NP sister-of b:NP", "rel:sister-of", "multi-var"),
    _p("left-sister-of", "n:NP left-sister-of p:PP", "rel:left-sister-of"),
    _p("right-sister-of", "p:PP right-sister-of v:VBD", "rel:right-sister-of"),
    _p("immediate-right-sister", "n:NP immediate-right-sister-of v:/^VB/",
       "rel:immediate-right-sister-of"),
    _p("first-child-of", "d:DT first-child-of np:NP", "rel:first-child-of"),
    _p("has-first-child", "np:NP has-first-child PRP$", "rel:has-first-child",
       "unnamed-only"),
    _p("last-child-of", "p:PP last-child-of np:NP", "rel:last-child-of"),
    _p("has-last-child", "vp:VP has-last-child s:S", "rel:has-last-child"),
    _p("has-only-child", "np:NP-SBJ has-only-child e:-NONE-", "rel:has-only-child"),
    # ---------------------------------------------------------------- blocks, fragments
    _p("block-overview", """
# a verb phrase whose verb is followed by an object and then a prepositional phrase
vp:VP {
  parent-of v:/^VB/
  parent-of o:NP
  parent-of p:PP
}
v precedes o
o precedes p
""", "block", "comments", "multi-var"),
    _p("block-with-condition", """
vp:VP { parent-of v:VBD; parent-of s:SBAR; v.word = "said" }
""", "block", "attr:word"),
    _p("fragment", '(VP /^VB/ (NP) (PP (IN "with")))', "fragment", "unnamed-only"),
    _p("fragment-vars", "(vp:VP v:/^VB/ (o:NP))", "fragment", "multi-var"),
    _p("fragment-relative-clause", """
np:NP parent-of (SBAR (w:WHNP) (S (NP-SBJ -NONE-)))  # subject relatives
""", "fragment", "comments"),
    _p("fragment-in-relation", "v:VBZ dominated-by (VP (VBZ) (NP-PRD))", "fragment",
       "rel:dominated-by"),
    # ---------------------------------------------------------------- attributes
    _p("attr-tokens", "np:NP; np.tokens >= 12", "attr:tokens", "op:>="),
    _p("attr-children", "x:*; x.children > 5", "attr:children", "op:>"),
    _p("attr-index", "x:NP-SBJ; x.index = 2", "attr:index", "op:="),
    _p("attr-gap-pair", """
b:*; b.gap >= 1
a:*; a.index = b.gap
""", "attr:gap", "attr:index", "attr-vs-attr", "multi-var"),
    _p("attr-functions", 'x:*; x.functions = "LOC-CLR"', "attr:functions"),
    _p("attr-functions-empty", 'x:NP; x.functions != ""; x.depth <= 2', "attr:functions",
       "attr:depth", "op:!=", "op:<="),
    _p("attr-label-regex", 'x:*; x.label ~ "^S-TPC"', "attr:label", "op:~"),
    _p("attr-label-not-regex", 'x:NP-SBJ; x.label !~ "[0-9]"', "attr:label", "op:!~"),
    _p("attr-category", 'x:!NP-SBJ; x.category = "NP"', "attr:category"),
    _p("attr-word-regex", 'x:CD; x.word ~ "^[0-9]+$"; x.word < "2"', "attr:word", "op:<"),
    _p("attr-word-brackets", 'x:*; x.word ~ "[()]"', "attr:word", "test:word-escaped"),
    _p("attr-empty-word", 'e:-NONE-; e.word ~ "^[*]T[*]"', "attr:word"),
    _p("attr-leaves", "s:S; s.leaves > s.tokens; s.tokens <= 6", "attr:leaves", "attr:tokens",
       "attr-vs-attr", "op:<="),
    _p("attr-position", "p:PP; p.position >= 4", "attr:position"),
    _p("attr-start-end", "x:NP; x.start = 1; x.end < 3", "attr:start", "attr:end", "op:<"),
    _p("attr-start-two-vars", """
a:NP immediate-left-sister-of b:NP
a.tokens > b.tokens
""", "attr-vs-attr", "multi-var"),
    _p("attr-end-missing", "x:NP-SBJ; not x.end >= 1", "attr:end", "missing"),
    _p("flag-empty", "e:*; e.empty", "flag:empty"),
    _p("flag-preterminal", "x:/^N/; x.preterminal; not x.empty", "flag:preterminal",
       "not:flag"),
    _p("flag-preterminal-neg", "x:*; not x.preterminal; x.children = 1", "flag:preterminal",
       "not:flag"),
    _p("missing-word-not", 'x:NP; not x.word = "the"', "missing", "not:compare"),
    _p("missing-word-neq", 'x:NP-SBJ; x.word != "the"', "missing", "op:!=",
       expect_empty=True),
    _p("missing-index", "x:WHNP; not x.index >= 1", "missing", "attr:index"),
    # ---------------------------------------------------------------- same node, not, or
    _p("same-node", """
np:NP { has-first-child f:*; has-last-child l:* }
f = l
""", "same-node", "multi-var"),
    _p("different-nodes", """
vp:VP { parent-of a:NP; parent-of b:NP }
a != b
""", "not-same-node", "multi-var"),
    _p("not-relation", "np:NP-SBJ; not np parent-of -NONE-", "not:relation"),
    _p("not-relation-named", "vp:VP; not vp parent-of v:/^VB/", "not:relation"),
    _p("not-group", "np:NP; not { np parent-of DT; np parent-of JJ }", "not:group"),
    _p("nested-not", """
s:S
not { s parent-of n:NP-SBJ; not n has-only-child -NONE- }
""", "not:group", "not:nested"),
    _p("or-groups", """
np:NP
not np parent-of PP
{ np parent-of DT } or { np parent-of PRP$ }
""", "or", "not:relation"),
    _p("or-statements", 'x:/^VB/; x.word = "is" or x.word = "was" or x.word = "has"', "or"),
    _p("or-relations", "x:PP; x parent-of TO or x child-of NP-PRD", "or"),
    _p("not-or", "n:NP-SBJ; not { n parent-of PRP or n parent-of NNP }", "or", "not:group"),
    # ---------------------------------------------------------------- names, results
    _p("underscore-name", """
_s:S parent-of vp:VP
_s parent-of NP-SBJ
""", "underscore"),
    _p("unnamed-block", "SBAR { parent-of WHADVP; parent-of S }", "unnamed-only", "block"),
    _p("multi-var-clause", "s:S { parent-of n:NP-SBJ; parent-of v:VP }", "multi-var"),
    _p("comments-only-lines", """
# sentences with a topicalised clause
# and a trace for it
t:S-TPC                     # the topic
e:-NONE-; e.word ~ "^[*]T[*]"
""", "comments", "multi-var"),
    _p("gum-root-fragment", "r:ROOT parent-of f:FRAG", "multi-var"),
    _p("gum-vocative", "v:NP-VOC dominated-by s:S", "rel:dominated-by"),
    _p("count-empty-precedes-sbj", "n:NP-SBJ precedes v:VP; n.tokens = 0", "tokens:empty",
       count_empty=True),
    # ---------------------------------------------------------------- issue 4: links
    # Coindexation and gapping as in Bies et al. (1995); the patterns are our own.
    _p("antecedent-of", "w:WHNP antecedent-of t:-NONE-", "rel:antecedent-of"),
    _p("trace-of-raised", "t:-NONE- trace-of n:NP-SBJ; t.kind = \"null-subject\"",
       "rel:trace-of", "attr:kind"),
    _p("relative-clause-trace", """
np:NP parent-of (SBAR (w:WHNP) (S))
w antecedent-of t:-NONE-
t.kind = "movement-trace"; t.refindex = w.index
""", "rel:antecedent-of", "attr:refindex", "attr:kind"),
    _p("coindexed-with", "a:NP coindexed-with b:*", "rel:coindexed-with"),
    _p("coindexed-with-gap", "a:VP coindexed-with b:*", "rel:coindexed-with"),
    _p("correspondent-of", "a:* correspondent-of b:*", "rel:correspondent-of"),
    _p("remnant-of", "b:NP remnant-of a:NP", "rel:remnant-of"),
    _p("not-linked", "w:WHNP; not w antecedent-of -NONE-", "rel:antecedent-of", "not:relation"),
    _p("empty-kinds", 'e:-NONE-; e.kind != "null-subject"; not e.refindex >= 1', "attr:kind",
       "attr:refindex"),
    _p("refindex-missing", "x:NP; x.refindex >= 0", "attr:refindex", expect_empty=True),
    # ---------------------------------------------------------------- issue 4: c-command
    _p("c-commands-reflexive", 's:NP-SBJ c-commands r:PRP; r.word ~ "sel(f|ves)$"',
       "rel:c-commands"),
    _p("c-commanded-by", "p:PP-CLR c-commanded-by v:/^VB/", "rel:c-commanded-by"),
    _p("not-c-commands", """
s:NP-SBJ
r:PRP; r.word ~ "sel(f|ves)$"
s dominated-by c:S; r dominated-by c
not s c-commands r
""", "rel:c-commands", "not:relation"),
    # ---------------------------------------------------------------- issue 4: heads
    _p("head-of", "v:/^VB/ head-of vp:VP", "rel:head-of"),
    _p("has-head", "pp:PP has-head h:!IN|TO", "rel:has-head"),
    _p("lexical-head-of", "h:VBD lexical-head-of s:S", "rel:lexical-head-of"),
    _p("has-lexical-head", "np:NP-SBJ has-lexical-head h:PRP", "rel:has-lexical-head"),
    _p("headword", 'np:NP; np.headword = "year"', "attr:headword"),
    _p("headword-object", 'p:PP parent-of o:NP; o.headword ~ "^[a-z]+s$"', "attr:headword"),
    _p("headtag", 'vp:VP; vp.headtag = "MD"', "attr:headtag"),
    _p("headword-vs-word", "vp:VP has-lexical-head v:*; v.word = vp.headword; vp.tokens > 8",
       "attr:headword", "attr-vs-attr"),
    _p("head-of-silent", "n:NP-SBJ; n.silent; n.headtag = \"-NONE-\"", "attr:headtag",
       "attr:silent"),
    # ---------------------------------------------------------------- issue 4: spans
    _p("silent-subject", "n:NP-SBJ; n.silent", "attr:silent"),
    _p("silent-phrase", "x:*; x.silent; not x.empty; x.children >= 2", "attr:silent"),
    _p("same-span-as", "f:FRAG same-span-as n:NP", "rel:same-span-as"),
    _p("same-span-imperative", "s:S same-span-as v:VP", "rel:same-span-as"),
    _p("same-span-counted", "s:S same-span-as v:VP", "rel:same-span-as", "tokens:empty",
       count_empty=True),
    _p("starts-with", "np:NP starts-with d:DT", "rel:starts-with"),
    _p("at-start-of", "c:CC at-start-of s:S", "rel:at-start-of"),
    _p("ends-with", "s:S ends-with p:PP", "rel:ends-with"),
    _p("at-end-of", "e:-NONE- at-end-of v:VP", "rel:at-end-of", count_empty=True),
    _p("at-end-of-default", "e:-NONE- at-end-of v:VP", "rel:at-end-of", expect_empty=True),
)

BY_NAME = {p.name: p for p in SUITE}
