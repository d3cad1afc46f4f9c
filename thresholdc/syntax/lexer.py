"""The lexer of rule files, plugged into lark's LALR parser in place of lark's own.

It produces the terminals that ``grammar.lark`` declares, with one compiled regular expression
(several times faster than lark's general lexer on files of thousands of lines) and applies the
line rules of DESIGN.md section 3:

- ``#`` starts a comment that runs to the end of the line;
- a newline ends a statement, except while a bracket ``(``, ``[`` or ``{`` is open;
- a keyword is always a keyword, never a name (``scale`` is the one word that is only a
  keyword where it can follow a ``real`` declaration, so it stays usable as a name).

The tokens handed to the parser and the brackets still open are kept (per thread) for the
error messages of :mod:`.parser`.
"""

from __future__ import annotations

import re
import threading
import unicodedata
from collections.abc import Iterator

from lark import Token
from lark.lexer import Lexer

from ..errors import RuleError
from ..textlines import split_lines

__all__ = ["RuleLexer", "KEYWORDS", "last_tokens", "open_brackets", "source_lines"]

#: Reserved words (DESIGN.md section 3), mapped to their terminal in ``grammar.lark``.
KEYWORDS: dict[str, str] = {
    "input": "INPUT",
    "output": "OUTPUT",
    "and": "AND_KW",
    "or": "OR_KW",
    "xor": "XOR_KW",
    "not": "NOT_KW",
    "implies": "IMPLIES_KW",
    "iff": "IFF_KW",
    "if": "IF",
    "then": "THEN",
    "else": "ELSE",
    "true": "TRUE",
    "false": "FALSE",
    "atleast": "ATLEAST",
    "atmost": "ATMOST",
    "exactly": "EXACTLY",
    "majority": "MAJORITY",
    "nand": "NAND",
    "nor": "NOR",
    "parity": "PARITY",
    "in": "IN",
    "bool": "BOOL",
    "real": "REAL",
}

_SYMBOLS = {
    "<->": "IFF_OP",
    "->": "IMPLIES_OP",
    "|": "OR_OP",
    "^": "XOR_OP",
    "&": "AND_OP",
    "!": "NOT_OP",
    "~": "NOT_OP",
    ">=": "CMP",
    "<=": "CMP",
    "==": "CMP",
    "!=": "CMP",
    ">": "CMP",
    "<": "CMP",
    "+": "PLUS",
    "-": "MINUS",
    "*": "STAR",
    "(": "LPAR",
    ")": "RPAR",
    "[": "LSQB",
    "]": "RSQB",
    "{": "LBRACE",
    "}": "RBRACE",
    ",": "COMMA",
    ":": "COLON",
    "=": "EQUAL",
}
_OPEN = frozenset({"LPAR", "LSQB", "LBRACE"})
_CLOSE = frozenset({"RPAR", "RSQB", "RBRACE"})

# Longer symbols first, so that "<->" is not read as "<" "-" ">".
_SYMBOL_RE = "|".join(re.escape(s) for s in sorted(_SYMBOLS, key=len, reverse=True))
_TOKEN_RE = re.compile(
    r"(?P<WS>[ \t\f\ufeff]+)"
    r"|(?P<NL>\r\n|\r|\n)"  # CRLF, a bare CR (old Mac files) and LF each end a line
    r"|(?P<COMMENT>\#[^\r\n]*)"
    r"|(?P<NAME>[A-Za-z_][A-Za-z0-9_]*)"
    r"|(?P<NUMBER>(?:[0-9]+\.[0-9]*|\.[0-9]+|[0-9]+)(?:[eE][+-]?[0-9]+)?)"
    rf"|(?P<SYMBOL>{_SYMBOL_RE})"
    r"|(?P<BAD>.)",
    re.DOTALL,
)


def source_lines(text: str) -> list[str]:
    """The lines of ``text`` as the lexer counts them: CRLF, a bare CR and LF each end one.

    >>> source_lines("a\\r\\nb\\rc\\nd")
    ['a', 'b', 'c', 'd']
    """
    return split_lines(text)


_STATE = threading.local()


def last_tokens() -> list[Token]:
    """The last few tokens handed to the parser in this thread (newest last)."""
    return getattr(_STATE, "history", [])


def non_ascii_hint(text: str, at: int) -> str:
    """The hint for a non-ASCII letter at offset ``at``: names are ASCII, with the word's
    accent-free spelling when it has one.

    >>> non_ascii_hint("y = café and b", 7)
    ": names use only ASCII letters, digits and '_' (write 'cafe' for 'café')"
    """
    start = end = at
    while start > 0 and (text[start - 1].isalnum() or text[start - 1] == "_"):
        start -= 1
    while end < len(text) and (text[end].isalnum() or text[end] == "_"):
        end += 1
    word = text[start:end]
    plain = "".join(c for c in unicodedata.normalize("NFKD", word) if c.isascii())
    hint = ": names use only ASCII letters, digits and '_'"
    if plain and (plain[0].isalpha() or plain[0] == "_") and plain != word:
        hint += f" (write '{plain}' for '{word}')"
    return hint


def lexed_text() -> str:
    """The text the lexer last read in this thread (for hints that look at the next line)."""
    return getattr(_STATE, "text", "")


def open_brackets() -> list[Token]:
    """The brackets opened and not closed when lexing stopped in this thread."""
    return getattr(_STATE, "open", [])


class RuleLexer(Lexer):
    """Lexer for lark's ``lexer=`` option (its plain interface: ``lex(text)``)."""

    __future_interface__ = 0

    def __init__(self, lexer_conf: object = None) -> None:
        self.lexer_conf = lexer_conf

    def lex(self, text: str) -> Iterator[Token]:  # type: ignore[override]
        """Yield the tokens of ``text``."""
        history: list[Token] = []
        opened: list[Token] = []
        _STATE.history = history
        _STATE.open = opened
        _STATE.text = text
        line, line_start = 1, 0
        prev_type = ""
        for m in _TOKEN_RE.finditer(text):
            kind = m.lastgroup
            if kind == "WS" or kind == "COMMENT":
                continue
            start, end = m.span()
            column = start - line_start + 1
            value = m.group()
            tok_line = line
            if kind == "NL":
                line += 1
                line_start = end
                if opened:
                    continue  # a statement continues while a bracket is open
                kind = "_NL"
            elif kind == "NAME":
                kind = KEYWORDS.get(value, "NAME")
                if value == "scale" and prev_type in ("REAL", "RSQB"):
                    kind = "SCALE"
            elif kind == "SYMBOL":
                kind = _SYMBOLS[value]
            elif kind == "BAD":
                shown = value if value.isprintable() else repr(value)[1:-1]
                message = f"unexpected character '{shown}'"
                if value.isalpha() and not value.isascii():
                    message += non_ascii_hint(text, start)
                raise RuleError(message, line=line, column=column)
            tok = Token(kind, value, start, tok_line, column, tok_line, column + len(value), end)  # type: ignore[arg-type]
            if kind in _OPEN:
                opened.append(tok)
            elif kind in _CLOSE and opened:
                opened.pop()
            history.append(tok)
            if len(history) > 8:
                del history[0]
            prev_type = kind  # type: ignore[assignment]
            yield tok
