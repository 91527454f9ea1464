"""Pattern text to the normal-form AST: a lark Transformer for the syntax, then name scoping.

Normal form (beyond what treequery/pattern/ast.py states):
- Anonymous nodes are named "_1", "_2", ... in the order their node tests appear.
- `Pattern.vars` and each `Exists.vars` are ordered by the first mention of the name
  in the text (a use may come before the binding: `o precedes p` then `o:NP`).
- `Pattern.condition` and every `Exists.condition` are an `And` of the conditions in
  text order; `{ }` groups are spliced in, never nested.
- A term's own conditions follow it: for a fragment, each child adds
  `parent-of(head, child)`, then `left-sister-of(previous child, child)`, then the
  child's own conditions; a block adds its statements after its node. The relation of
  `a REL b` comes after the conditions of both operands.
- `not S` is `Not(Exists(vars, And(...)))` when S binds nodes, else `Not` of S's
  single condition (or of an `And` when S is a group of several); each `or` branch is
  built the same way, without the `Not`.
- `a != b` is `Not(Relation("same-node", a, b))`.
- `within N` gives `min_depth=None, max_depth=N`; `at depth N` gives both N.
"""
from __future__ import annotations

from lark import Token, Transformer
from lark.exceptions import UnexpectedInput, VisitError

from treequery.errors import PatternSyntaxError
from treequery.pattern.ast import (
    AnyLabel,
    Attr,
    CategoryIs,
    CategoryRegex,
    Compare,
    Flag,
    LabelNot,
    LabelOneOf,
    LabelTest,
    Literal,
    NodeTest,
    Pattern,
    Span,
)
from treequery.pattern.grammar import pattern_parser
from treequery.pattern.scope import build_pattern
from treequery.pattern.syntax import (
    RELATION_WORDS,
    RESERVED_WORDS,
    USER_NAME,
    BuildError,
    ConditionStatement,
    Group,
    Located,
    Name,
    NodeStatement,
    NodeSyntax,
    NotStatement,
    OrStatement,
    RelationStatement,
    SameStatement,
    Statement,
    Term,
    unescape,
)
from treequery.pattern.syntax_errors import describe_syntax_error


def parse_pattern(text: str) -> Pattern:
    """Parse pattern text into its normal-form AST (no semantic checks beyond names)."""
    try:
        tree = pattern_parser().parse(text)
        statements = _SyntaxBuilder().transform(tree)
    except UnexpectedInput as error:
        raise describe_syntax_error(text, error) from None
    except VisitError as error:  # the transformer's own errors arrive wrapped
        if isinstance(error.orig_exc, BuildError):
            raise error.orig_exc.to_pattern_error(text) from None
        raise
    if not statements:
        raise PatternSyntaxError("the pattern is empty", text, 0,
                                 hint="write a node test such as NP, or a statement such as "
                                      "`s:S parent-of NP`")
    try:
        return build_pattern(text, statements)
    except BuildError as error:
        raise error.to_pattern_error(text) from None


def _quoted(token: Token) -> str:
    return unescape(token.value[1:-1], token.value[0])[0]


def _span(token: Token) -> Span:
    return Span(token.start_pos, token.end_pos)


def _join(first: Span, last: Span) -> Span:
    return Span(first.start, last.end)


def _name(token: Token) -> Name:
    """A variable name, rejecting reserved words and names that mimic anonymous ones."""
    text = token.value
    if text in RESERVED_WORDS:
        raise BuildError(f"`{text}` is a reserved word and cannot be a variable name",
                         token.start_pos)
    if not USER_NAME.fullmatch(text):
        hint = "write * for any node" if text.strip("_") == "" else None
        raise BuildError(
            f"`{text}`: a name that starts with _ must continue with a letter "
            "(names such as _1 are reserved for unnamed nodes)", token.start_pos, hint)
    return Name(text, _span(token))


def _attr(token: Token) -> Attr:
    var, _, name = token.value.partition(".")
    _name(Token("NAME", var, start_pos=token.start_pos, end_pos=token.start_pos + len(var)))
    return Attr(var, name, _span(token))


def _category(token: Token) -> CategoryIs:
    """NP-SBJ-TMP -> category NP with function tags SBJ, TMP; -NONE- is whole."""
    if token.type == "DASH_CATEGORY":
        return CategoryIs(token.value)
    category, *functions = token.value.split("-")
    for number, part in enumerate(functions):
        if part.isdigit():
            before = "-".join([category, *functions[:number]])
            raise BuildError(
                f"`{token.value}`: a number in a label is an index, not part of a node test",
                token.start_pos + len(before) + 1,
                hint=f"indices are attributes: write n:{before} then n.index = {part}")
    return CategoryIs(category, tuple(functions))


# ---------------------------------------------------------------- transformer

class _SyntaxBuilder(Transformer):
    """One short method per grammar rule, building the syntax objects of syntax.py."""

    def start(self, children: list) -> tuple[Statement, ...]:
        return tuple(children)

    def alternatives(self, children: list) -> OrStatement:
        branches = tuple(child for child in children if not isinstance(child, Token))
        return OrStatement(branches, _join(branches[0].span, branches[-1].span))

    def negation(self, children: list) -> NotStatement:
        keyword, inner = children
        return NotStatement(inner, Span(keyword.start_pos, inner.span.end))

    def node_statement(self, children: list) -> NodeStatement:
        (term,) = children
        return NodeStatement(term, term.span)

    def relation_statement(self, children: list) -> RelationStatement:
        left, word, right, *distance = children
        return self._relation(left, word, right, distance, left.span)

    def subject_relation_statement(self, children: list) -> RelationStatement:
        word, right, *distance = children
        return self._relation(None, word, right, distance, _span(word))

    def _relation(self, left, word: Token, right: Term, distance: list,
                  start: Span) -> RelationStatement:
        depth = distance[0].value if distance else None
        end = distance[0].span if distance else right.span
        if depth is not None and RELATION_WORDS[word.value][0] != "dominates":
            raise BuildError(
                f"`within` and `at depth` only go with dominates / dominated-by, "
                f"not with {word.value}", distance[0].span.start,
                hint="`a parent-of b` is `a dominates b at depth 1`")
        return RelationStatement(left, word.value, _span(word), right, depth, _join(start, end))

    def within(self, children: list) -> Located:
        keyword, number = children
        return Located((None, int(number.value)), Span(keyword.start_pos, number.end_pos))

    def at_depth(self, children: list) -> Located:
        keyword, _, number = children
        return Located((int(number.value), int(number.value)),
                        Span(keyword.start_pos, number.end_pos))

    def compare_statement(self, children: list) -> ConditionStatement:
        attr_token, op, value = children
        left = _attr(attr_token)
        is_regex = isinstance(value, Located)
        if is_regex and op.value not in ("~", "!~"):
            raise BuildError("a /regular expression/ can only follow ~ or !~",
                                   value.span.start, hint=f"write {attr_token.value} ~ /.../")
        right = value.value if is_regex else value
        span = _join(left.span, right.span)
        return ConditionStatement(Compare(left, op.value, right, span), span)

    def flag_statement(self, children: list) -> ConditionStatement:
        attr = _attr(children[0])
        return ConditionStatement(Flag(attr, attr.span), attr.span)

    def same_statement(self, children: list) -> SameStatement:
        return self._same(children, negated=False)

    def different_statement(self, children: list) -> SameStatement:
        return self._same(children, negated=True)

    def _same(self, children: list, negated: bool) -> SameStatement:
        left, _, right = children
        return SameStatement(_name(left), _name(right), negated,
                              Span(left.start_pos, right.end_pos))

    def group(self, children: list) -> Group:
        opening, *items, closing = children
        return Group(tuple(items), Span(opening.start_pos, closing.end_pos))

    def term(self, children: list) -> Term:
        node, *block = children
        if not block:
            return Term(node, None, node.span)
        return Term(node, block[0].value, _join(node.span, block[0].span))

    def block(self, children: list) -> Located:
        opening, *items, closing = children
        return Located(tuple(items), Span(opening.start_pos, closing.end_pos))

    def reference(self, children: list) -> Name:
        return _name(children[0])

    def bound_node(self, children: list) -> NodeSyntax:
        name_token, _, test = children
        name = _name(name_token)
        span = _join(name.span, test.span)
        return NodeSyntax(name, test.value, span, (), span)

    def anonymous_node(self, children: list) -> NodeSyntax:
        (test,) = children
        return NodeSyntax(None, test.value, test.span, (), test.span)

    def fragment(self, children: list) -> NodeSyntax:
        opening, head, *nodes, closing = children
        children_terms = tuple(Term(node, None, node.span) for node in nodes)
        if head.test.word is not None and children_terms:
            raise BuildError("a node with a word is a preterminal and has no children",
                                   children_terms[0].span.start)
        return NodeSyntax(head.name, head.test, head.test_span, children_terms,
                     Span(opening.start_pos, closing.end_pos))

    def fragment_head(self, children: list) -> NodeSyntax:
        test = children[-1]
        name = _name(children[0]) if len(children) == 3 else None
        span = _join(name.span, test.span) if name else test.span
        return NodeSyntax(name, test.value, span, (), span)

    def node_test(self, children: list) -> Located:
        label, *word = children
        if not word:
            return Located(NodeTest(label.value), label.span)
        return Located(NodeTest(label.value, _quoted(word[0])), _join(label.span, _span(word[0])))

    def any_label(self, children: list) -> Located:
        return Located(AnyLabel(), _span(children[0]))

    def not_label(self, children: list) -> Located:
        bang, inner = children
        return Located(LabelNot(inner.value), Span(bang.start_pos, inner.span.end))

    def label_options(self, children: list) -> Located:
        options = [child for child in children if not isinstance(child, Token)]  # drop the |s
        if len(options) == 1:
            return options[0]
        labels: tuple[LabelTest, ...] = tuple(option.value for option in options)
        return Located(LabelOneOf(labels), _join(options[0].span, options[-1].span))

    def category(self, children: list) -> Located:
        return Located(_category(children[0]), _span(children[0]))

    def quoted_category(self, children: list) -> Located:
        return Located(CategoryIs(_quoted(children[0])), _span(children[0]))

    def category_regex(self, children: list) -> Located:
        return Located(CategoryRegex(_quoted(children[0])), _span(children[0]))

    def compare_op(self, children: list) -> Token:
        return children[0]

    def int_value(self, children: list) -> Literal:
        return Literal(int(children[0].value), _span(children[0]))

    def string_value(self, children: list) -> Literal:
        return Literal(_quoted(children[0]), _span(children[0]))

    def regex_value(self, children: list) -> Located:
        literal = Literal(_quoted(children[0]), _span(children[0]))
        return Located(literal, literal.span)

    def attr_value(self, children: list) -> Attr:
        return _attr(children[0])

