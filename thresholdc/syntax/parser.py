"""Parse rule text (DESIGN.md section 3) into a checked :class:`~thresholdc.ir.program.Program`.

The grammar is ``grammar.lark``, read by lark's LALR parser fed by the lexer of :mod:`.lexer`; the
Transformer of :mod:`.transform` builds the AST while parsing and :mod:`.checks` checks the file
as a whole.  Every mistake raises :class:`~thresholdc.errors.RuleError` with the file, line,
column and source line; lark's own exceptions never escape.
"""

from __future__ import annotations

import gc
import hashlib
import os
import re
import sys
from functools import lru_cache
from importlib import resources

import lark
from lark import Lark, Token
from lark.exceptions import UnexpectedCharacters, UnexpectedInput, UnexpectedToken

from ..errors import RuleError, Span
from ..ir.program import Program
from .checks import check_program
from .lexer import KEYWORDS, RuleLexer, last_tokens, lexed_text, open_brackets, source_lines
from .transform import RuleBuilder

__all__ = ["parse", "KEYWORDS"]

_KEYWORD_TYPES = frozenset(KEYWORDS.values())

# Terminals that start an expression, and those that continue one.
_EXPR_START = frozenset(
    {"NAME", "NUMBER", "TRUE", "FALSE", "LPAR", "NOT_KW", "NOT_OP", "MINUS", "IF"}
    | {"ATLEAST", "ATMOST", "EXACTLY", "MAJORITY", "NAND", "NOR", "PARITY"}
)
_OPERATORS = frozenset(
    {"AND_KW", "AND_OP", "OR_KW", "OR_OP", "XOR_KW", "XOR_OP", "IMPLIES_KW", "IMPLIES_OP"}
    | {"IFF_KW", "IFF_OP", "CMP", "PLUS", "IN"}
)
_END = frozenset({"_NL", "$END"})


def _cache_file(grammar: str) -> str | bool:
    """Where lark keeps the analysed grammar between runs, or False for no cache.

    The directory is ``$THRESHOLDC_CACHE_DIR`` (empty: no cache), else ``$XDG_CACHE_HOME`` or
    ``~/.cache``, then ``thresholdc/``, created private to the user (lark unpickles the file,
    so it never lives in a shared temporary directory).  The name carries a digest of the
    grammar, lark's version and Python's, so versions side by side never read each other's.
    Loading the cache takes a few milliseconds where building the LALR tables takes tens.
    """
    base = os.environ.get("THRESHOLDC_CACHE_DIR")
    if base is None:
        home = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
        base = os.path.join(home, "thresholdc")
    if not base:
        return False
    try:
        os.makedirs(base, mode=0o700, exist_ok=True)
    except OSError:
        return False
    key = f"{grammar}\0{lark.__version__}\0{sys.version_info[:2]}".encode()
    return os.path.join(base, f"rules-grammar-{hashlib.sha256(key).hexdigest()[:16]}.lark")


@lru_cache(maxsize=1)
def _parser() -> Lark:
    """The LALR parser, built once per process (the grammar is shipped inside the package) and
    its tables kept between processes in :func:`_cache_file` (lark checks the file against
    the grammar and options and rebuilds it when it does not match or cannot be read)."""
    grammar = resources.files(__package__).joinpath("grammar.lark").read_text(encoding="utf-8")
    return Lark(
        grammar,
        parser="lalr",
        lexer=RuleLexer,
        transformer=RuleBuilder(),
        maybe_placeholders=False,
        cache=_cache_file(grammar),
    )


def parse(text: str, file: str = "<rules>") -> Program:
    """Parse and check a rule file.

    Parameters
    ----------
    text : str
        The rules (DESIGN.md section 3).
    file : str
        The file name used in error messages.

    Returns
    -------
    Program
        Inputs, outputs, the definitions the outputs need (source order), a topological
        ``order`` of them and the ``unused`` definitions.

    Raises
    ------
    RuleError
        On any syntax or semantic mistake, with file, line, column and source line (an empty
        program has no position).

    Examples
    --------
    >>> prog = parse("input a, b\\ny = a and not b\\n")
    >>> prog.outputs, prog.definitions["y"]
    (('y',), y = (a and (not b)))
    """
    # The parse allocates many small acyclic objects; pausing the cyclic garbage collector
    # meanwhile saves about a third of the time on large files.
    # A byte-order mark is not part of the text: columns on line 1 count from after it.
    if text.startswith("\ufeff"):
        text = text[1:]
    paused = gc.isenabled()
    gc.disable()
    try:
        statements = _parser().parse(text + "\n")
        return check_program(statements, text, file)  # type: ignore[arg-type]
    except RuleError as err:
        raise _located(err, file, text) from None
    except UnexpectedInput as err:
        raise _located(_syntax_error(err), file, text) from None
    finally:
        if paused:
            gc.enable()


def _located(err: RuleError, file: str, text: str) -> RuleError:
    """The error with its file and source line filled in."""
    err.file = file
    if err.line is not None and err.source_line is None:
        lines = source_lines(text)
        if 1 <= err.line <= len(lines):
            err.source_line = lines[err.line - 1]
    return err


# ---- syntax error messages -----------------------------------------------------------------


def _syntax_error(err: UnexpectedInput) -> RuleError:
    """Translate a lark exception into a RuleError with a message in plain words."""
    if isinstance(err, UnexpectedCharacters):
        text = err.char if err.char.isprintable() else repr(err.char)
        return RuleError(f"unexpected character '{text}'", line=err.line, column=err.column)
    assert isinstance(err, UnexpectedToken), err
    tok = err.token
    expected = _acceptable(err)
    history = list(last_tokens())
    if not history or history[-1] is not tok:
        history.append(tok)  # a token the contextual lexer only found by its fallback
    prev = history[-2] if len(history) >= 2 else None
    if tok.type == "EQUAL" and prev is not None and prev.type in ("INPUT", "OUTPUT"):
        # 'input = …' or 'output = …': a definition of a name that is a keyword
        return _at(f"'{prev.value}' is a keyword and cannot be used as a name", prev)
    if tok.type == "$END":
        opened = open_brackets()
        if opened:
            return _at(f"'{opened[-1].value}' is never closed", opened[-1])
    if expected == {"MINUS", "NUMBER"} and len(history) >= 3 and history[-3].type in (
        "ATLEAST",
        "ATMOST",
        "EXACTLY",
    ):
        func = history[-3].value
        return _at(f"{func} needs the integer k as its first argument, found {_show(tok)}", tok)
    message = _message(tok, expected, prev)
    hint = _hint(tok, prev, expected)
    if hint:
        return _at(f"{message}: {hint}", tok, fallback=prev)
    if tok.type == "CMP" and "CMP" not in expected:
        message += (
            ": a comparison has the weighted sum on its left and an integer on its right, "
            "as in 'a + 2*b >= 2'"
        )
    elif tok.type in ("PLUS", "MINUS", "STAR") and any(t.type == "CMP" for t in history[-4:-1]):
        message += ": the right side of a comparison is a single integer"
    opened = open_brackets()
    if opened and tok.line > opened[-1].line and message.startswith("unexpected"):
        first = opened[-1]
        message += f": '{first.value}' on line {first.line} is still open"
    elif tok.type == "LPAR" and prev is not None and prev.type == "NAME":
        message = (
            f"'{prev.value}' is not a function; the calls are atleast, atmost, exactly, "
            "majority, nand, nor and parity"
        )
    return _at(message, tok, fallback=prev)


#: Spellings from other languages and what this language writes instead.
_FOREIGN = {"&&": "and", "||": "or", "&": "and", "|": "or"}


def _hint(tok: Token, prev: Token | None, expected: set[str]) -> str:
    """A hint for common mistakes carried over from other languages, or ``""``."""
    is_expr = "NOT_KW" in expected
    if tok.type == "NAME" and tok.value.lower() in KEYWORDS and tok.value != tok.value.lower():
        return f"keywords are lower case: write '{tok.value.lower()}'"
    if prev is not None and prev.type == "NAME" and tok.type == "NAME" and (
            prev.value.lower() in KEYWORDS and prev.value != prev.value.lower()):
        return f"keywords are lower case: write '{prev.value.lower()}'"
    if tok.type == "EQUAL" and prev is not None and prev.type != "_NL":
        return ("'=' defines a name at the start of a statement; to say that two Boolean "
                "values are equal write 'a <-> b'")
    if prev is not None and str(tok.value) in ("&", "|") and str(prev.value) == str(tok.value):
        doubled = str(prev.value) * 2
        return f"'{doubled}' is written '{_FOREIGN[doubled]}' (or a single '{tok.value}')"
    if (tok.type == "_NL" and is_expr and prev is not None and tok.line is not None
            and _continues(tok.line)):
        return ("a statement continues on the next line only while a bracket is open: put "
                "the right-hand side in brackets, as in 'y = (a and' … 'b)'")
    return ""


def _continues(line: int) -> bool:
    """True when the line after ``line`` looks like the rest of a statement (not blank, not a
    new statement), so a missing bracket is the likely mistake."""
    lines = source_lines(lexed_text())
    if line >= len(lines):
        return False
    nxt = lines[line].split("#", 1)[0]
    if not nxt.strip():
        return False
    return not re.match(r"\s*(input\b|output\b|[A-Za-z_]\w*\s*=(?!=))", nxt)


def _acceptable(err: UnexpectedToken) -> set[str]:
    """Terminals the parser could really take where it stopped (not the lexer's wider set)."""
    state = getattr(err, "state", None)
    try:
        table = state.parse_conf.parse_table.states[state.position]  # type: ignore[union-attr]
        names = {n for n in table if n.isupper() or n.startswith("$")}
    except (AttributeError, KeyError):
        names = set(err.expected) - {"WS", "COMMENT"}
    if "$END" in names:
        names.add("_NL")
    return names


def _at(message: str, tok: Token, fallback: Token | None = None) -> RuleError:
    """A RuleError at a token (or at the fallback token when it has no position)."""
    where = tok if getattr(tok, "line", None) is not None else fallback
    if where is None or getattr(where, "line", None) is None:
        return RuleError(message)
    span = Span(where.line, where.column)  # type: ignore[arg-type]
    return RuleError(message, line=span.line, column=span.column)


_ITE_PLACEMENT = (
    "'if … then … else …' stands only as a whole right-hand side, inside brackets or as a call "
    "argument: write '(if … then … else …)'"
)


def _message(tok: Token, expected: set[str], prev: Token | None) -> str:
    """The plain-words message for an unexpected token."""
    after = f" after {_show(prev)}" if prev is not None and prev.type != "_NL" else ""
    is_expr = "NOT_KW" in expected
    if expected <= _END and tok.type not in _END:
        return _unexpected(tok)
    if (
        tok.type in ("IF", "NOT_KW", "TRUE", "FALSE")
        and {"NAME", "LPAR"} <= expected
        and not is_expr
    ):
        # a term of a weighted comparison: a name, a call or a bracketed expression
        if tok.type == "IF":
            return _ITE_PLACEMENT
        shown = f"({tok.value} …)" if tok.type == "NOT_KW" else f"({tok.value})"
        return (
            f"expected an operand (a name, a call or a bracketed expression){after}, found "
            f"'{tok.value}': put it in brackets, as in '{shown}'"
        )
    if tok.type in _KEYWORD_TYPES and "NAME" in expected:
        if tok.type == "IF" and is_expr:
            return _ITE_PLACEMENT
        if not is_expr or tok.type not in _EXPR_START:
            if is_expr:
                return f"expected an expression{after}, found the keyword '{tok.value}'"
            return f"'{tok.value}' is a keyword and cannot be used as a name"
    if "OUTPUT" in expected:
        return f"expected a statement (input …, output … or NAME = …), found {_show(tok)}"
    if is_expr and not expected & _OPERATORS:
        return f"expected an expression{after}"
    if expected & _OPERATORS:
        closers = [t for t in ("THEN", "ELSE", "RPAR", "RBRACE", "RSQB") if t in expected]
        if closers and tok.type in _END:
            return f"expected {_join(_describe(t) for t in closers)}{after}"
        if "CMP" in expected and "PLUS" in expected and tok.type in _END | {"RPAR", "COMMA"}:
            if not expected & {"AND_KW", "_NL"}:
                return f"expected a comparison operator (>=, >, <=, <, ==, !=){after}"
        return _unexpected(tok)
    items = _expected_items(expected)
    if items and len(items) <= 4:
        return f"expected {_join(items)}{after}, found {_show(tok)}"
    return _unexpected(tok)


def _expected_items(expected: set[str]) -> list[str]:
    """Plain words for an expected set, grouping terminals that belong together."""
    rest = set(expected)
    items: list[str] = []
    if {"NAME", "LPAR"} <= rest:
        items.append("an operand (a name, a call or a bracketed expression)")
        rest -= _EXPR_START
    if "NUMBER" in rest:
        items.append("an integer" if "NAME" not in rest else "a number")
        rest -= {"NUMBER", "MINUS"}
    for t in ("NAME", "EQUAL", "COLON", "COMMA", "BOOL", "REAL", "LBRACE", "LSQB", "IN"):
        if t in rest:
            items.append(_describe(t))
            rest.discard(t)
    for t in sorted(rest - _END):
        items.append(_describe(t))
    if rest & _END:
        items.append("the end of the line")
    return items


_WORDS = {
    "NAME": "a name",
    "NUMBER": "a number",
    "EQUAL": "'='",
    "COLON": "':'",
    "COMMA": "','",
    "LPAR": "'('",
    "RPAR": "')'",
    "LSQB": "'['",
    "RSQB": "']'",
    "LBRACE": "'{'",
    "RBRACE": "'}'",
    "CMP": "a comparison operator",
    "MINUS": "'-'",
    "PLUS": "'+'",
    "STAR": "'*'",
    "SCALE": "'scale'",
    "_NL": "the end of the line",
    "$END": "the end of the line",
}


def _describe(terminal: str) -> str:
    """Plain words for one terminal."""
    if terminal in _WORDS:
        return _WORDS[terminal]
    for word, t in KEYWORDS.items():
        if t == terminal:
            return f"'{word}'"
    return terminal.lower()


def _unexpected(tok: Token) -> str:
    """``unexpected …`` for a token."""
    if tok.type in _END:
        return "unexpected end of line" if tok.type == "_NL" else "unexpected end of file"
    return f"unexpected {_show(tok)}"


def _show(tok: Token) -> str:
    """How a token is named in a message."""
    if tok.type in _END:
        return "the end of the line" if tok.type == "_NL" else "the end of the file"
    if tok.type == "NAME":
        return f"name '{tok.value}'"
    if tok.type in _KEYWORD_TYPES:
        return f"'{tok.value}'"
    return f"'{tok.value}'"


def _join(items) -> str:
    """``a``, ``a or b``, ``a, b or c``."""
    items = list(items)
    if len(items) <= 1:
        return "".join(items)
    return f"{', '.join(items[:-1])} or {items[-1]}"
