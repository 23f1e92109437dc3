#!/usr/bin/env python3
# SPDX-License-Identifier: GPL-3.0-or-later
"""Finds translatable strings that xgettext cannot see whole.

xgettext reads string literals, not the preprocessor: in
_("a" SEPARATOR "b") it extracts only "a", while the program looks up
"a · b" at run time and never finds a translation. Every argument of _(),
N_(), C_() and NC_() that mixes string literals with macros or other
identifiers is reported. Arguments without any literal (such as
_(table[i].label), translating an N_() string) are fine.
Usage: check-i18n-literals.py SRCDIR  (reads SRCDIR/po/POTFILES.in)
"""
import os
import re
import sys

TOKEN = re.compile(r'''
    (?P<comment>/\*.*?\*/|//[^\n]*)
  | (?P<string>"(?:[^"\\\n]|\\.)*")
  | (?P<char>'(?:[^'\\\n]|\\.)*')
  | (?P<ident>[A-Za-z_][A-Za-z0-9_]*)
  | (?P<space>\s+)
  | (?P<other>.)
''', re.S | re.X)
KEYWORDS = {'_', 'N_', 'C_', 'NC_', 'Q_'}


def check_file(path, shown):
    text = open(path, encoding='utf-8', errors='replace').read()
    tokens = [(m.lastgroup, m.group(), m.start()) for m in TOKEN.finditer(text)]
    tokens = [t for t in tokens if t[0] not in ('comment', 'space')]
    problems = []
    i = 0
    while i < len(tokens) - 1:
        kind, value, pos = tokens[i]
        if kind == 'ident' and value in KEYWORDS and tokens[i + 1][1] == '(' \
                and not (i > 0 and tokens[i - 1][1] in ('.', '->')):
            depth, j = 0, i + 1
            has_literal = has_ident = False
            while j < len(tokens):
                k, v, _ = tokens[j]
                if k == 'ident' and v in KEYWORDS and j + 1 < len(tokens) \
                        and tokens[j + 1][1] == '(':
                    # A nested N_("...") is checked on its own.
                    inner = 0
                    j += 1
                    while j < len(tokens):
                        if tokens[j][1] == '(':
                            inner += 1
                        elif tokens[j][1] == ')':
                            inner -= 1
                            if inner == 0:
                                break
                        j += 1
                    j += 1
                    continue
                if v == '(':
                    depth += 1
                elif v == ')':
                    depth -= 1
                    if depth == 0:
                        break
                elif k == 'string':
                    has_literal = True
                elif k == 'ident':
                    has_ident = True
                j += 1
            if has_literal and has_ident:
                line = text.count('\n', 0, pos) + 1
                problems.append(f'{shown}:{line}: {value}() joins a string literal with a '
                                'macro or variable; xgettext sees only the literals')
            i = j
        i += 1
    return problems


def main():
    top = sys.argv[1]
    with open(os.path.join(top, 'po', 'POTFILES.in'), encoding='utf-8') as f:
        files = [l.strip() for l in f if l.strip() and not l.startswith('#')]
    problems = []
    for name in files:
        if name.endswith(('.c', '.h')) and os.path.exists(os.path.join(top, name)):
            problems += check_file(os.path.join(top, name), name)
    for p in problems:
        print(p)
    return 1 if problems else 0


if __name__ == '__main__':
    sys.exit(main())
