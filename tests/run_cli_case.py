#!/usr/bin/env python3
"""Runs one command-line test written as data (tests/cli_cases/*.case).

A case file has lines:
    args: <arguments, shell-quoted; {root} = source tree, {tmp} = a fresh folder>
    exit: <expected exit code>
    stdout: <fragment that must appear on standard output>   (any number)
    stderr: <fragment that must appear on standard error>    (any number)
    absent: <fragment that must appear on neither>            (any number)
    empty-dir: <folder under {tmp} that must be missing or empty afterwards>
Lines starting with # are comments.
"""
import os
import shlex
import subprocess
import sys
import tempfile


def main() -> int:
    exe, case_path, root = sys.argv[1], sys.argv[2], sys.argv[3]
    expect = {"stdout": [], "stderr": [], "absent": [], "empty-dir": []}
    args, code = None, None
    with tempfile.TemporaryDirectory(prefix="cullcast-cli-") as tmp:
        def fill(text: str) -> str:
            return text.replace("{root}", root).replace("{tmp}", tmp)

        with open(case_path, encoding="utf-8") as f:
            for number, line in enumerate(f, 1):
                line = line.rstrip("\n")
                if not line.strip() or line.lstrip().startswith("#"):
                    continue
                key, sep, value = line.partition(":")
                if not sep:
                    print(f"{case_path}:{number}: expected 'key: value'")
                    return 2
                key, value = key.strip(), value.strip()
                if key == "args":
                    args = [fill(a) for a in shlex.split(value)]
                elif key == "exit":
                    code = int(value)
                elif key in expect:
                    expect[key].append(fill(value))
                else:
                    print(f"{case_path}:{number}: unknown key '{key}'")
                    return 2
        if args is None or code is None:
            print(f"{case_path}: needs 'args:' and 'exit:'")
            return 2
        run = subprocess.run([exe] + args, capture_output=True, text=True, timeout=600, cwd=tmp)
        failures = []
        if run.returncode != code:
            failures.append(f"exit code {run.returncode}, expected {code}")
        for fragment in expect["stdout"]:
            if fragment not in run.stdout:
                failures.append(f"stdout lacks: {fragment!r}")
        for fragment in expect["stderr"]:
            if fragment not in run.stderr:
                failures.append(f"stderr lacks: {fragment!r}")
        for fragment in expect["absent"]:
            if fragment in run.stdout or fragment in run.stderr:
                failures.append(f"output contains: {fragment!r}")
        for folder in expect["empty-dir"]:
            if os.path.isdir(folder) and os.listdir(folder):
                failures.append(f"folder not empty: {folder}: {os.listdir(folder)}")
        if failures:
            print("command:", shlex.join([exe] + args))
            print("--- stdout ---\n" + run.stdout[-4000:])
            print("--- stderr ---\n" + run.stderr[-4000:])
            print("\n".join(failures))
            return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
