#!/usr/bin/python3
"""Summarise `go test -json` output: print each package result, the output of
every failed test, and the count of passed, failed and skipped tests. Exit 1
when a test or package failed, or, under CI=true, when any test was skipped
(a missing outside tool must fail CI, never skip; see internal/testtool)."""
import json
import os
import sys

events = []
with open(sys.argv[1]) as f:
    for line in f:
        line = line.strip()
        if line.startswith("{"):
            try:
                events.append(json.loads(line))
            except ValueError:
                print(line)
        elif line:
            print(line)  # build errors and the like

out, result, pkgs = {}, {}, {}
for e in events:
    key = (e.get("Package"), e.get("Test"))
    a = e.get("Action")
    if a == "output":
        out.setdefault(key, []).append(e.get("Output", ""))
    elif a in ("pass", "fail", "skip"):
        if e.get("Test"):
            result[key] = a
        else:
            pkgs[e.get("Package")] = (a, e.get("Elapsed", 0))

for (pkg, test), a in sorted(result.items()):
    if a == "fail":
        sys.stdout.write("".join(out.get((pkg, test), [])))
for pkg, (a, el) in sorted(pkgs.items()):
    if a == "fail":
        sys.stdout.write("".join(out.get((pkg, None), [])))
    print("%-4s %s %.1fs" % ({"pass": "ok", "fail": "FAIL", "skip": "?"}[a], pkg, el))

n = {k: sum(1 for v in result.values() if v == k) for k in ("pass", "fail", "skip")}
skipped = sorted("%s %s" % k for k, v in result.items() if v == "skip")
for s in skipped:
    print("skipped:", s)
print("tests: %d passed, %d failed, %d skipped" % (n["pass"], n["fail"], n["skip"]))
ci = os.environ.get("CI", "").lower() in ("true", "1")
bad = n["fail"] > 0 or any(a == "fail" for a, _ in pkgs.values())
if ci and n["skip"] > 0:
    print("CI=true: %d tests skipped; under CI nothing may be skipped" % n["skip"])
    bad = True
sys.exit(1 if bad else 0)
