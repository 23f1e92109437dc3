#!/usr/bin/env python3
# SPDX-License-Identifier: GPL-3.0-or-later
"""Every <gui> label in the user guide must be a label the window shows.

Collects the string literals of src/ui/*.c and the translatable texts of
src/ui/*.ui, drops mnemonic underscores, and reports each <gui>...</gui> of
help/C/*.page that matches none of them, so that the guide follows the
window when labels change.  Usage: check-gui-labels.py SRCDIR
"""
import glob
import html
import os
import re
import sys

top = sys.argv[1]
labels = set()
for path in glob.glob(os.path.join(top, 'src', 'ui', '*.c')):
    text = open(path, encoding='utf-8').read()
    for m in re.finditer(r'"((?:[^"\\\n]|\\.)*)"', text):
        labels.add(m.group(1))
for path in glob.glob(os.path.join(top, 'src', 'ui', '*.ui')):
    text = open(path, encoding='utf-8').read()
    for m in re.finditer(r'translatable="yes"[^>]*>([^<]*)<', text):
        labels.add(html.unescape(m.group(1)))
labels = {l.replace('_', '').strip() for l in labels}

missing = []
for page in sorted(glob.glob(os.path.join(top, 'help', 'C', '*.page'))):
    text = open(page, encoding='utf-8').read()
    for m in re.finditer(r'<gui>(.*?)</gui>', text, re.S):
        label = html.unescape(re.sub(r'\s+', ' ', m.group(1))).strip()
        if label not in labels:
            line = text.count('\n', 0, m.start()) + 1
            missing.append(f'{os.path.basename(page)}:{line}: <gui>{label}</gui> is not a label in src/ui')
for m in missing:
    print(m)
sys.exit(1 if missing else 0)
