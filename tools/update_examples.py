#!/usr/bin/env python3
"""Run the commands of the worked examples in docs/examples/ and write their
output into the text, so that the examples cannot drift from the program.

Conventions in the Markdown (docs/examples/README.md says the same):

* An HTML comment `<!-- run -->` (or `<!-- run: OPTIONS -->`) directly before
  a fenced ```console block marks it as run. In that block every line that
  starts with `$ ` is a command (a trailing backslash continues it on the next
  line); every other line is output, which this script replaces by the output
  of a fresh run. OPTIONS, separated by spaces:
    keep=REGEX   show only output lines matching REGEX (Python re.search; no
                 spaces, write \\s); each run of dropped lines becomes "..."
    head=N       show only the first N output lines, then "..."
    stderr       show standard error after standard output (progress lines
                 and refusals go to standard error; by default only standard
                 output is shown)
    exit=N       the last command of the block must exit with status N
                 (default 0 for every command)
* An HTML comment `<!-- file: NAME -->` directly before any fenced block
  writes that block's text to NAME in the example's folder before the
  commands after it run (e.g. a sample manifest or a Python snippet).

Each Markdown file (docs/examples/*.md and docs/python.md unless files are
named) runs in a fresh empty temporary folder, its blocks in order, with
`fulcrum` on PATH pointing to --fulcrum, `python3` to the Python that runs
this script (Debian's, with astropy), the folder of --fulcrum on PYTHONPATH
(where the build puts the Python module `fulcrum`), SOURCE_DATE_EPOCH,
OMP_NUM_THREADS=1, LC_ALL=C and TZ=UTC fixed, so the output is the same on
every run. An output that contains the temporary folder's path is an error
(the text must show relative paths).

Usage:
  tools/update_examples.py --fulcrum build/fulcrum            # rewrite
  tools/update_examples.py --fulcrum build/fulcrum --check    # compare only
Exit status: 0 when up to date (or rewritten), 1 when --check finds a
difference (a unified diff names the file and block), 2 on a failed command
or a malformed marker.
"""

import argparse
import concurrent.futures
import difflib
import os
import re
import shlex
import subprocess
import sys
import tempfile
from pathlib import Path

SOURCE_DATE_EPOCH = "1700000000"
MARKER = re.compile(r"^(\s*)<!--\s*(run|file)\s*(?::\s*(.*?))?\s*-->\s*$")
FENCE = re.compile(r"^(\s*)(```+)(.*)$")
COMMAND_TIMEOUT_S = 300


class ExampleError(Exception):
    """A marker that cannot be honoured: a failed command or a bad marker."""


def parse_options(text, where):
    opts = {"keep": None, "head": None, "stderr": False, "exit": 0}
    for word in (text or "").split():
        key, _, value = word.partition("=")
        if key == "keep" and value:
            opts["keep"] = re.compile(value)
        elif key == "head" and value.isdigit():
            opts["head"] = int(value)
        elif key == "exit" and value.isdigit():
            opts["exit"] = int(value)
        elif key == "stderr" and not value:
            opts["stderr"] = True
        else:
            raise ExampleError(f"{where}: unknown run option '{word}'")
    return opts


def trim(lines, opts):
    """Apply keep= and head= to the output lines."""
    if opts["keep"] is not None:
        kept, dropped = [], False
        for line in lines:
            if opts["keep"].search(line):
                kept.append(line)
                dropped = False
            elif not dropped:
                kept.append("...")
                dropped = True
        lines = kept
    if opts["head"] is not None and len(lines) > opts["head"]:
        lines = lines[: opts["head"]] + ["..."]
    return lines


def split_commands(body):
    """The commands of a console block: (command text lines, joined command)."""
    commands, i = [], 0
    while i < len(body):
        line = body[i]
        if line.startswith("$ "):
            shown = [line]
            while shown[-1].endswith("\\") and i + 1 < len(body):
                i += 1
                shown.append(body[i])
            joined = " ".join(s.rstrip("\\").strip() for s in shown)[2:]
            commands.append((shown, joined))
        i += 1
    return commands


def run_command(command, folder, env, where):
    r = subprocess.run(["bash", "-c", command], cwd=folder, env=env, capture_output=True,
                       text=True, timeout=COMMAND_TIMEOUT_S)
    return r.returncode, r.stdout, r.stderr


def run_block(body, opts, folder, env, where):
    commands = split_commands(body)
    if not commands:
        raise ExampleError(f"{where}: a run block needs at least one '$ ' command")
    out = []
    for n, (shown, command) in enumerate(commands):
        code, stdout, stderr = run_command(command, folder, env, where)
        want = opts["exit"] if n == len(commands) - 1 else 0
        if code != want:
            raise ExampleError(f"{where}: '{command}' exited with {code}, expected {want}\n{stdout}{stderr}")
        text = stdout + (stderr if opts["stderr"] else "")
        if str(folder) in text:
            raise ExampleError(f"{where}: the output of '{command}' names the temporary folder; "
                               "show relative paths")
        lines = [l.rstrip() for l in text.splitlines()]
        out += shown + trim(lines, opts)
    return out


def process(path, env_base, fulcrum):
    """The regenerated text of one Markdown file, and its marked blocks as
    (where, old lines, new lines)."""
    lines = path.read_text().split("\n")
    result, blocks = [], []
    with tempfile.TemporaryDirectory(prefix="fulcrum-example-") as tmp:
        folder = Path(tmp) / "work"
        folder.mkdir()
        bindir = Path(tmp) / "bin"
        bindir.mkdir()
        (bindir / "fulcrum").symlink_to(fulcrum)
        (bindir / "python3").symlink_to(sys.executable)
        env = dict(env_base, PATH=f"{bindir}{os.pathsep}{env_base.get('PATH', '/usr/bin:/bin')}")
        i, block = 0, 0
        while i < len(lines):
            m = MARKER.match(lines[i])
            result.append(lines[i])
            i += 1
            if not m:
                continue
            block += 1
            where = f"{os.path.relpath(path)}: block {block} (line {i})"
            if i >= len(lines) or not FENCE.match(lines[i]):
                raise ExampleError(f"{where}: the marker must be directly followed by a ``` fence")
            indent, fence, _ = FENCE.match(lines[i]).groups()
            result.append(lines[i])
            i += 1
            body = []
            while i < len(lines) and not lines[i].strip().startswith(fence):
                body.append(lines[i][len(indent):] if lines[i].startswith(indent) else lines[i].lstrip())
                i += 1
            if i >= len(lines):
                raise ExampleError(f"{where}: unclosed fence")
            closing = lines[i]
            i += 1
            if m.group(2) == "file":
                name = (m.group(3) or "").strip()
                if not name or name.startswith("/") or ".." in Path(name).parts:
                    raise ExampleError(f"{where}: file marker needs a relative file name")
                (folder / name).parent.mkdir(parents=True, exist_ok=True)
                (folder / name).write_text("\n".join(body) + "\n")
                new_body = body
            else:
                new_body = run_block(body, parse_options(m.group(3), where), folder, env, where)
            new_lines = [(indent + l) if l else "" for l in new_body]
            blocks.append((where, lines[i - 1 - len(body):i - 1], new_lines))
            result += new_lines
            result.append(closing)
    return "\n".join(result), blocks


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--fulcrum", required=True, help="the fulcrum binary to run")
    parser.add_argument("--check", action="store_true", help="compare only; exit 1 on a difference")
    parser.add_argument("--jobs", type=int, default=1, help="Markdown files run at once (default 1)")
    parser.add_argument("files", nargs="*", help="Markdown files (default: docs/examples/*.md)")
    args = parser.parse_args()

    root = Path(__file__).resolve().parent.parent
    files = [Path(f) for f in args.files] or (sorted((root / "docs" / "examples").glob("*.md")) +
                                              [root / "docs" / "python.md"])
    fulcrum = Path(args.fulcrum).resolve()
    if not os.access(fulcrum, os.X_OK):
        print(f"update_examples: --fulcrum {args.fulcrum}: not an executable file", file=sys.stderr)
        return 2
    env = {"PATH": os.environ.get("PATH", "/usr/bin:/bin"), "HOME": os.environ.get("HOME", "/tmp"),
           "SOURCE_DATE_EPOCH": SOURCE_DATE_EPOCH, "OMP_NUM_THREADS": "1", "LC_ALL": "C", "TZ": "UTC",
           # the Python module is built beside the binary (build/fulcrum.*.so)
           "PYTHONPATH": str(fulcrum.parent)}

    status = 0
    with concurrent.futures.ThreadPoolExecutor(max_workers=max(1, args.jobs)) as pool:
        futures = {f: pool.submit(process, f, env, fulcrum) for f in files}
        for f, future in futures.items():
            try:
                new, blocks = future.result()
            except (ExampleError, subprocess.TimeoutExpired) as e:
                print(f"update_examples: {e}", file=sys.stderr)
                status = max(status, 2)
                continue
            old = f.read_text()
            try:
                shown = f.relative_to(root)
            except ValueError:
                shown = f
            if new == old:
                print(f"{shown}: up to date")
            elif args.check:
                for where, old_lines, new_lines in blocks:
                    if old_lines != new_lines:
                        print(f"{where}: the text differs from a fresh run")
                        sys.stdout.writelines(l + "\n" for l in difflib.unified_diff(
                            old_lines, new_lines, "text", "fresh run", lineterm=""))
                status = max(status, 1)
            else:
                f.write_text(new)
                print(f"{shown}: rewritten")
    return status


if __name__ == "__main__":
    sys.exit(main())
