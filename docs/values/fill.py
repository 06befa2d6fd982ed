#!/usr/bin/env python3
"""Replace {{Name}} placeholders in a Markdown file with attest's named values.

usage: fill.py values.json chapter.md > filled.md

Unknown names are an error, so a renamed hypothesis cannot leave a stale
placeholder in the text unnoticed.
"""
import json
import re
import sys


def main():
    values = json.load(open(sys.argv[1], encoding="utf-8"))
    text = open(sys.argv[2], encoding="utf-8").read()
    missing = sorted({m for m in re.findall(r"\{\{(\w+)\}\}", text) if m not in values})
    if missing:
        sys.exit("error: unknown value names: " + ", ".join(missing))
    sys.stdout.write(re.sub(r"\{\{(\w+)\}\}", lambda m: values[m.group(1)], text))


if __name__ == "__main__":
    main()
