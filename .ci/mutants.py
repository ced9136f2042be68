#!/usr/bin/python3
"""Mutation check of the column wiring (`make mutants`).

Each mutation below is a plausible wiring error in the column-filling code
(pipelines/schema.go): swapped columns, reversed percentile order, SVI into
mvi, GEV bounds swapped, off-by-one return periods, ... For each one, the
script copies the working tree to a temporary directory, applies the mutation
(the text must occur exactly once), runs the end-to-end column checks and
requires that they FAIL. It prints each mutation with the test that caught it
and exits 1 if any mutation survived or could not be applied.
"""
import os
import re
import shutil
import subprocess
import sys
import tempfile

FILE = "pipelines/schema.go"
TESTS = "TestE2EColumnsAgainstNumpy"

# (name, [(old, new), ...])
MUTATIONS = [
    ("power_std_kw_m filled with the maximum",
     [("return c.r.sum.PowerStdKWm }", "return c.r.sum.PowerMaxKWm }")]),
    ("hm0 percentiles in reversed order",
     [("c.r.sum.Hm0PercentilesM[c.k]", "c.r.sum.Hm0PercentilesM[len(c.r.sum.Hm0PercentilesM)-1-c.k]")]),
    ("power percentiles in reversed order",
     [("c.r.sum.PowerPercentilesKWm[c.k]", "c.r.sum.PowerPercentilesKWm[len(c.r.sum.PowerPercentilesKWm)-1-c.k]")]),
    ("SVI written into mvi",
     [("return c.r.sum.MVI }", "return c.r.sum.SVI }")]),
    ("GEV interval bounds swapped (cells)",
     [("gevLevel(c, func(l extremes.Level) float64 { return l.Lower })", "gevLevel(c, func(l extremes.Level) float64 { return l.@@ })"),
      ("gevLevel(c, func(l extremes.Level) float64 { return l.Upper })", "gevLevel(c, func(l extremes.Level) float64 { return l.Lower })"),
      ("return l.@@ })", "return l.Upper })")]),
    ("GEV return level of the next period (off by one)",
     [("level(&c.r.ext.GEV, c.k)", "level(&c.r.ext.GEV, c.k+1)")]),
    ("devices swapped",
     [("return c.r.sum.Devices[c.k]", "return c.r.sum.Devices[len(c.r.sum.Devices)-1-c.k]")]),
    ("te_mean_s filled with Tp",
     [("return c.r.sum.TeMeanS }", "return c.r.sum.TpMeanS }")]),
    ("GEV location and scale swapped",
     [("return c.r.ext.GEV.Loc }", "return c.r.ext.GEV.@@ }"),
      ("return c.r.ext.GEV.Scale }", "return c.r.ext.GEV.Loc }"),
      ("return c.r.ext.GEV.@@ }", "return c.r.ext.GEV.Scale }")]),
    ("GEV shape with scipy's sign instead of Coles'",
     [("return c.r.ext.GEV.Shape }", "return -c.r.ext.GEV.Shape }")]),
    ("monthly power_mean_kw_m filled with Hm0",
     [("return x.v.m.PowerMeanKWm", "return x.v.m.Hm0MeanM")]),
    ("extremes.parquet interval bounds swapped",
     [("func(x eRow) float64 { return x.v.l.Lower }", "func(x eRow) float64 { return x.v.l.@@ }"),
      ("func(x eRow) float64 { return x.v.l.Upper }", "func(x eRow) float64 { return x.v.l.Lower }"),
      ("return x.v.l.@@ }", "return x.v.l.Upper }")]),
    ("hm0_mean_m filled with the maximum",
     [("return c.r.sum.Hm0MeanM }).when", "return c.r.sum.Hm0MaxM }).when")]),
    ("capacity factor and AEP swapped",
     [("return device(c).AEPMWh }", "return device(c).@@ }"),
      ("return device(c).CapacityFactor }", "return device(c).AEPMWh }"),
      ("return device(c).@@ }", "return device(c).CapacityFactor }")]),
    ("interannual_cov filled with power_cov",
     [("return c.r.sum.InterannualCoV }", "return c.r.sum.PowerCoV }")]),
    ("monthly coverage filled with valid hours",
     [("return x.v.m.Coverage", "return x.v.m.ValidHours")]),
]


def main():
    root = subprocess.check_output(["git", "rev-parse", "--show-toplevel"], text=True).strip()
    tmp = tempfile.mkdtemp(prefix="swellgrid-mutants-")
    src = os.path.join(tmp, "src")
    shutil.copytree(root, src, ignore=shutil.ignore_patterns(".git", "bin", "test-out", "bench-out", "demo-out", "out"))
    path = os.path.join(src, FILE)
    orig = open(path).read()
    survived = 0
    try:
        for name, edits in MUTATIONS:
            text = orig
            for old, new in edits:
                if text.count(old) != 1:
                    print("CANNOT APPLY  %s: %r occurs %d times" % (name, old, text.count(old)))
                    survived += 1
                    break
                text = text.replace(old, new)
            else:
                open(path, "w").write(text)
                r = subprocess.run(["go", "test", "-count=1", "-run", TESTS, "./pipelines/"], cwd=src,
                                   capture_output=True, text=True)
                failed = sorted(set(re.findall(r"--- FAIL: (\S+)", r.stdout)))
                first = next((l.strip() for l in r.stdout.splitlines() if "_test.go:" in l), "")
                if r.returncode != 0 and failed:
                    print("caught    %-50s by %s: %s" % (name, ",".join(failed), first[:110]))
                elif r.returncode != 0:
                    print("BROKEN    %-50s (does not build?)\n%s" % (name, r.stdout[-1500:] + r.stderr[-1500:]))
                    survived += 1
                else:
                    print("SURVIVED  %s" % name)
                    survived += 1
            open(path, "w").write(orig)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print("%d mutations, %d not caught" % (len(MUTATIONS), survived))
    sys.exit(1 if survived else 0)


if __name__ == "__main__":
    main()
