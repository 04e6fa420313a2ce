#!/usr/bin/env python3
"""Lists the longest function bodies in src/ (lines from the opening to the
closing brace), for the "no function over 150 lines" rule of DEVELOPERS.md.

    python3 tools/function_lengths.py [--over 80] [FOLDER]

A text scan, not a parser: comments and string literals are blanked, then a
brace that opens at namespace level (or class level in a .cpp) after a
closing parenthesis starts a function. Lambdas count towards the function
that holds them. Exits 1 if any function is longer than --fail (default 150).
"""
import argparse
import pathlib
import re
import sys


def blank_comments_and_strings(text):
    out, i, n = [], 0, len(text)
    while i < n:
        c = text[i]
        if text.startswith("//", i):
            j = text.find("\n", i)
            j = n if j < 0 else j
            out.append(" " * (j - i)); i = j
        elif text.startswith("/*", i):
            j = text.find("*/", i + 2)
            j = n if j < 0 else j + 2
            out.append(re.sub(r"[^\n]", " ", text[i:j])); i = j
        elif text.startswith('R"', i):
            m = re.match(r'R"([^(]*)\(', text[i:])
            end = text.find(")" + m.group(1) + '"', i) + len(m.group(1)) + 2
            out.append('""' + re.sub(r"[^\n]", " ", text[i + 2:end])); i = end
        elif c in "\"'":
            j = i + 1
            while j < n and text[j] != c:
                j += 2 if text[j] == "\\" else 1
            out.append(c + " " * (j - i - 1) + c); i = j + 1
        else:
            out.append(c); i += 1
    return "".join(out)


HEAD = re.compile(r"\)\s*(const\s*)?(noexcept\s*)?(override\s*)?(->\s*[\w:<>,\s&*]+)?\s*$")
NOT_FUNCTION = re.compile(r"\b(if|for|while|switch|catch)\s*\(")


def functions(path):
    text = blank_comments_and_strings(path.read_text())
    depth, scopes, starts = 0, [], []
    for pos, c in enumerate(text):
        if c == "{":
            before = text[max(0, pos - 400):pos]
            line_start = before.rfind(";") + 1
            head = before[max(line_start, before.rfind("}") + 1):]
            kind = "other"
            if re.search(r"\b(namespace|struct|class|enum)\b[^()]*$", head):
                kind = "scope"
            elif all(k == "scope" for k in scopes) and HEAD.search(head) and not NOT_FUNCTION.search(head.split("\n")[-1]):
                kind = "function"
                name = re.search(r"([\w:~]+)\s*\([^()]*(\([^()]*\)[^()]*)*\)[^()]*$", head)
                starts.append((pos, name.group(1) if name else "?"))
            scopes.append(kind)
        elif c == "}" and scopes:
            kind = scopes.pop()
            if kind == "function":
                start, name = starts.pop()
                first = text.count("\n", 0, start) + 1
                last = text.count("\n", 0, pos) + 1
                yield name, first, last - first + 1


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("folder", nargs="?", default="src")
    ap.add_argument("--over", type=int, default=80, help="list functions longer than this (lines)")
    ap.add_argument("--fail", type=int, default=150, help="exit 1 if any function is longer (lines)")
    args = ap.parse_args()
    rows = []
    for path in sorted(pathlib.Path(args.folder).rglob("*.[ch]pp")):
        rows += [(n, str(path), line, name) for name, line, n in functions(path)]
    rows.sort(reverse=True)
    long = [r for r in rows if r[0] > args.over]
    for n, path, line, name in long:
        print(f"{n:5d} lines  {path}:{line}  {name}")
    worst = rows[0][0] if rows else 0
    print(f"{len(rows)} functions; {len(long)} longer than {args.over} lines; "
          f"{sum(r[0] > args.fail for r in rows)} longer than {args.fail}; longest {worst}")
    return 1 if worst > args.fail else 0


if __name__ == "__main__":
    sys.exit(main())
