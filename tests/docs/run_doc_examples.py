#!/usr/bin/python3
"""Run the command examples of one documentation file, so the docs never drift
from the program.

Convention (docs/index.md, "Examples in these docs"):
- Only fenced blocks whose info string starts with `console` are run.
- In such a block, a line starting with `$ ` is a command, run by bash from the
  repository root, with the built `cullcast` first on PATH. A command line
  ending in a backslash continues on the next line.
- Other lines are the output shown to the reader. They are not compared,
  except lines starting `cullcast: ` (errors, warnings), `error:` or `warning:` that follow
  a command: each must appear (whitespace-normalised) in that command's output,
  so documented messages stay true; `...` in such a line stands for any text.
- A command must exit with 0, unless it ends with the comment `# exit N`: then
  it must exit with exactly N (an expected failure, shown on purpose).
- Examples write only below git-ignored folders: when the repository is a git
  checkout, any new untracked, not ignored file after the run fails the test.

Usage: run_doc_examples.py CULLCAST_EXE DOC_FILE REPO_ROOT [--list]
       --list prints the commands that would run and exits.
       run_doc_examples.py CULLCAST_EXE --demo-currents REPO_ROOT
       writes the demo currents (scenarios/lantern-reach/currents) if missing.
Exit status: 0 when every command behaves as documented, 1 otherwise.
"""
import os
import re
import subprocess
import sys
import time

EXIT_COMMENT = re.compile(r"\s#\s*exit\s+(\d+)\s*$")
CHECKED_OUTPUT = re.compile(r"^(cullcast: |error:|warning:)")


def examples(doc_path):
    """Yields (line number, command, expected exit code, checked output lines)."""
    with open(doc_path, encoding="utf-8") as f:
        lines = f.read().split("\n")
    in_console = False
    fence = ""
    current = None  # [line, command, expected, checked]
    out = []
    i = 0
    while i < len(lines):
        line = lines[i]
        stripped = line.strip()
        if not in_console:
            m = re.match(r"^(\s*)(`{3,}|~{3,})\s*(\S*)", line)
            if m and m.group(3).split(",")[0] == "console":
                in_console, fence = True, m.group(2)
            elif m:
                # Skip any other fenced block whole (it may contain "```console" text).
                other = m.group(2)
                i += 1
                while i < len(lines) and not lines[i].strip().startswith(other):
                    i += 1
            i += 1
            continue
        if stripped.startswith(fence):
            if current:
                out.append(tuple(current))
                current = None
            in_console = False
            i += 1
            continue
        if stripped.startswith("$ "):
            if current:
                out.append(tuple(current))
            start = i + 1
            command = stripped[2:]
            while command.endswith("\\") and i + 1 < len(lines):
                i += 1
                command = command[:-1] + " " + lines[i].strip().lstrip(">").strip()
            expected = 0
            m = EXIT_COMMENT.search(command)
            if m:
                expected = int(m.group(1))
            current = [start, command, expected, []]
        elif current and CHECKED_OUTPUT.match(stripped):
            current[3].append(stripped)
        i += 1
    if in_console:
        raise SystemExit(f"{doc_path}: a ```console block is not closed")
    return out


def untracked(root):
    try:
        r = subprocess.run(["git", "-C", root, "status", "--porcelain", "--untracked-files=all"],
                           capture_output=True, text=True, timeout=60)
    except (OSError, subprocess.TimeoutExpired):
        return None
    if r.returncode != 0:
        return None  # not a git checkout (e.g. an unpacked release)
    return {l[3:] for l in r.stdout.splitlines() if l.startswith("?? ")}


def normalise(text):
    return " ".join(text.split())


def demo_currents(exe, root):
    """The fixture: writes the demo currents when any file of the set is missing."""
    import datetime
    folder = os.path.join(root, "scenarios", "lantern-reach", "currents")
    # demo-data's defaults: two seasons one year apart, 50 days each, one file per 10 days.
    names = [f"lantern_reach_{datetime.date(year, 12, 1) + datetime.timedelta(days=10 * k):%Y%m%d}.nc"
             for year in (2026, 2027) for k in range(5)]
    missing = [n for n in names if not os.path.exists(os.path.join(folder, n))]
    if not missing:
        print(f"demo currents present in {folder}")
        return 0
    print(f"writing the demo currents into {folder} ({len(missing)} of {len(names)} files missing)")
    t0 = time.monotonic()
    r = subprocess.run([exe, "demo-data", folder])
    print(f"demo-data: exit {r.returncode} after {time.monotonic() - t0:.1f} s")
    return r.returncode


def shown_in(documented, output):
    """True when the documented line appears in the output; "..." in the
    documented line stands for any text (e.g. an absolute path)."""
    at = 0
    for piece in normalise(documented).split("..."):
        piece = piece.strip()
        if not piece:
            continue
        found = output.find(piece, at)
        if found < 0:
            return False
        at = found + len(piece)
    return True


def main(argv):
    if len(argv) == 4 and argv[2] == "--demo-currents":
        return demo_currents(os.path.abspath(argv[1]), os.path.abspath(argv[3]))
    if len(argv) < 4:
        print(__doc__, file=sys.stderr)
        return 2
    exe, doc, root = os.path.abspath(argv[1]), os.path.abspath(argv[2]), os.path.abspath(argv[3])
    cases = examples(doc)
    rel = os.path.relpath(doc, root)
    if "--list" in argv[4:]:
        for line, command, expected, _ in cases:
            print(f"{rel}:{line}: {command}" + (f"   [expects exit {expected}]" if expected else ""))
        return 0
    if not cases:
        print(f"{rel}: no ```console examples")
        return 0
    env = dict(os.environ)
    env["PATH"] = os.path.dirname(exe) + os.pathsep + env.get("PATH", "")
    env["LC_ALL"] = "C.UTF-8"
    # One OpenMP thread per example: ctest already runs tests side by side, and
    # results do not depend on the thread count.
    env.setdefault("OMP_NUM_THREADS", "1")
    before = untracked(root)
    failures = 0
    for line, command, expected, checked in cases:
        t0 = time.monotonic()
        r = subprocess.run(["bash", "-o", "pipefail", "-c", command], cwd=root, env=env,
                           stdin=subprocess.DEVNULL, capture_output=True, text=True)
        took = time.monotonic() - t0
        both = normalise(r.stdout + "\n" + r.stderr)
        problems = []
        if r.returncode != expected:
            problems.append(f"exit {r.returncode}, documented {expected}")
        for text in checked:
            if not shown_in(text, both):
                problems.append(f"documented output line not printed: {text}")
        status = "ok" if not problems else "FAILED"
        print(f"{rel}:{line}: {status} ({took:.1f} s): $ {command}")
        if problems:
            failures += 1
            for p in problems:
                print(f"    {p}")
            print("    --- stdout ---\n" + r.stdout[-3000:] + "    --- stderr ---\n" + r.stderr[-3000:])
    after = untracked(root)
    if before is not None and after is not None:
        new = sorted(after - before)
        if new:
            failures += 1
            print(f"{rel}: examples left files outside git-ignored folders: " + ", ".join(new[:10]))
    print(f"{rel}: {len(cases)} examples run, {failures} problem(s)")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
