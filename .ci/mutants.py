#!/usr/bin/python3
"""Mutation check of the column wiring (`make mutants`).

Each mutation below is a plausible wiring error in the column-filling code
(pipelines/engine/schema.go, unless an edit names another file): swapped columns,
reversed percentile order, SVI into mvi, GEV bounds swapped, off-by-one return
periods, scatter axes transposed, seasons shifted, a window one step too
long, ... For each one, the script copies the working tree to a temporary
directory, applies the mutation (the text must occur exactly once), runs the
end-to-end column checks and requires that they FAIL. It prints each mutation
with the test that caught it and exits 1 if any mutation survived or could
not be applied. An edit is (old, new) in FILE or (file, old, new).
"""
import os
import re
import shutil
import subprocess
import sys
import tempfile

FILE = "pipelines/engine/schema.go"
TESTS = "TestE2EColumnsAgainstNumpy|TestSpectralColumnsAgainstNumpy|TestInvalidValuesAgainstNumpy|TestBootstrapColumnsAgainstScipy|TestBiasCorrectedAtlas"

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
     [("gevLevel(c, func(l extremes.Level) float64 { return l.ProfLower })", "gevLevel(c, func(l extremes.Level) float64 { return l.@@ })"),
      ("gevLevel(c, func(l extremes.Level) float64 { return l.ProfUpper })", "gevLevel(c, func(l extremes.Level) float64 { return l.ProfLower })"),
      ("return l.@@ })", "return l.ProfUpper })")]),
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
     [("return c.r.sum.Hm0MeanM }).When", "return c.r.sum.Hm0MaxM }).When")]),
    ("capacity factor and AEP swapped",
     [("return device(c).AEPMWh }", "return device(c).@@ }"),
      ("return device(c).CapacityFactor }", "return device(c).AEPMWh }"),
      ("return device(c).@@ }", "return device(c).CapacityFactor }")]),
    ("interannual_cov filled with power_cov",
     [("return c.r.sum.InterannualCoV }", "return c.r.sum.PowerCoV }")]),
    ("monthly coverage filled with valid hours",
     [("return x.v.m.Coverage", "return x.v.m.ValidHours")]),
    # the columns compared since the first 16
    ("GPD interval bounds swapped (cells)",
     [("gpdLevel(c, func(l extremes.Level) float64 { return l.ProfLower })", "gpdLevel(c, func(l extremes.Level) float64 { return l.@@ })"),
      ("gpdLevel(c, func(l extremes.Level) float64 { return l.ProfUpper })", "gpdLevel(c, func(l extremes.Level) float64 { return l.ProfLower })"),
      ("return l.@@ })", "return l.ProfUpper })")]),
    ("GPD return levels taken from the GEV fit",
     [("level(&c.r.ext.GPD, c.k)", "level(&c.r.ext.GEV, c.k)")]),
    ("te_rl<T>y_s filled with the associated Tp",
     [("return gevLevel(c, func(l extremes.Level) float64 { return l.Te }) }", "return gevLevel(c, func(l extremes.Level) float64 { return l.Tp }) }")]),
    ("above_rated and below_cutin swapped",
     [("return device(c).AboveRatedEnergyShare }", "return device(c).@@ }"),
      ("return device(c).BelowCutInEnergyShare }", "return device(c).AboveRatedEnergyShare }"),
      ("return device(c).@@ }", "return device(c).BelowCutInEnergyShare }")]),
    ("energy_outside_matrix from the time share, not the energy share",
     [("return device(c).OutsideMatrixEnergyShare }", "return device(c).OutsideMatrixTimeShare }")]),
    ("design periods reversed",
     [("get(d.largest[c.k])", "get(d.largest[len(d.largest)-1-c.k])")]),
    ("exceedance rows in reversed order",
     [("func exceedRows(r *cellResult) []climate.ExceedRow   { return r.exceed }",
       "func exceedRows(r *cellResult) []climate.ExceedRow   { x := append([]climate.ExceedRow(nil), r.exceed...); "
       "for i, j := 0, len(x)-1; i < j; i, j = i+1, j-1 { x[i], x[j] = x[j], x[i] }; return x }")]),
    ("exceedance share filled with the share below the level",
     [("return x.v.ShareExceeded }", "return 1 - x.v.ShareExceeded }")]),
    ("scatter axes transposed",
     [("func(x sRow) float64 { return x.v.Hm0LoM }", "func(x sRow) float64 { return x.v.@@ }"),
      ("func(x sRow) float64 { return x.v.TeLoS }", "func(x sRow) float64 { return x.v.Hm0LoM }"),
      ("return x.v.@@ }", "return x.v.TeLoS }"),
      ("return openEdge(x.v.Hm0HiM) }", "return openEdge(x.v.@@) }"),
      ("return openEdge(x.v.TeHiS) }", "return openEdge(x.v.Hm0HiM) }"),
      ("return openEdge(x.v.@@) }", "return openEdge(x.v.TeHiS) }")]),
    ("weather window one step too long (strictly longer than the duration)",
     [("stats/climate/state.go", "\t\t\tif r.len < D {\n", "\t\t\tif r.len <= D {\n"),
      ("stats/climate/state.go", "\t\t\tif prev < D {\n", "\t\t\tif prev <= D {\n")]),
    ("windows_per_month and fraction_in_windows swapped",
     [("return x.v.FractionInWindows }", "return x.v.@@ }"),
      ("return x.v.WindowsPerMonth }", "return x.v.FractionInWindows }"),
      ("return x.v.@@ }", "return x.v.WindowsPerMonth }")]),
    ("seasons shifted by one month (DJF = Jan-Mar, ...)",
     [("stats/climate/summary.go", '{{"DJF", [3]int{12, 1, 2}}, {"MAM", [3]int{3, 4, 5}}, {"JJA", [3]int{6, 7, 8}}, {"SON", [3]int{9, 10, 11}}}',
       '{{"DJF", [3]int{1, 2, 3}}, {"MAM", [3]int{4, 5, 6}}, {"JJA", [3]int{7, 8, 9}}, {"SON", [3]int{10, 11, 12}}}')]),
    ("calendar-month climatology off by one (month m shows month m+1)",
     [("stats/climate/tables.go", "MonthRow{Month: m + 1, PowerMeanKWm: cl.monthJ[m], Hm0MeanM: cl.monthH[m],",
       "MonthRow{Month: m + 1, PowerMeanKWm: cl.monthJ[(m+1)%12], Hm0MeanM: cl.monthH[(m+1)%12],")]),
    ("threshold ladder shape interval bounds swapped",
     [("return x.v.ShapeLo }", "return x.v.@@ }"),
      ("return x.v.ShapeHi }", "return x.v.ShapeLo }"),
      ("return x.v.@@ }", "return x.v.ShapeHi }")]),
    # the spectral-only columns (TestSpectralColumnsAgainstNumpy)
    ("width_mean and directionality swapped (spectra)",
     [("pipelines/engine/results.go", "= c.spec.WidthMean(), c.spec.DirMaxPowerDeg(), c.spec.Directionality(),",
       "= c.spec.Directionality(), c.spec.DirMaxPowerDeg(), c.spec.WidthMean(),")]),
    ("tp_mean_s from the discrete peak, not the parabolic one (spectra)",
     [("pipelines/engine/stream.go", "p.J, p.Hm0, p.Te, p.Tp, p.MeanDirDeg", "p.J, p.Hm0, p.Te, p.TpDiscrete, p.MeanDirDeg")]),
    ("directional maximum only at the arc ends (spectra)",
     [("stats/seastate/kernel.go", "if cs*d-ss*c > 0 && c*se-d*ce > 0 {", "if false && cs*d-ss*c > 0 && c*se-d*ce > 0 {")]),
    ("bootstrap interval bounds swapped (extremes.parquet)",
     [("func(x eRow) float64 { return x.v.l.BootLower }", "func(x eRow) float64 { return x.v.l.@@ }"),
      ("func(x eRow) float64 { return x.v.l.BootUpper }", "func(x eRow) float64 { return x.v.l.BootLower }"),
      ("return x.v.l.@@ }", "return x.v.l.BootUpper }")]),
    # unusable values (TestInvalidValuesAgainstNumpy)
    ("storm peaks fed the unscreened Hm0 (a 70 m height as an annual maximum)",
     [("pipelines/engine/stream.go", "j, hm0, te, tp, dir := c.clim.AddAt(&st.ct, jv[t*w+k], hm0s[i], tev[t*w+k], tp, dir)",
       "j, _, te, tp, dir := c.clim.AddAt(&st.ct, jv[t*w+k], hm0s[i], tev[t*w+k], tp, dir)\n\t\t\thm0 := hm0s[i]")]),
    ("power kept when Hm0 or Te is unusable",
     [("stats/climate/state.go", "\tif bad {\n\t\tj = nan\n\t} else if", "\tif bad && false {\n\t\tj = nan\n\t} else if")]),
    # the bias-corrected atlas (TestBiasCorrectedAtlas)
    ("bias correction applied to the raw columns",
     [("pipelines/engine/results.go", "r.corr, r.corrOf = &cs, c.corr", "r.sum, r.corr, r.corrOf = cs, &cs, c.corr")]),
    ("Hm0 correction slope inverted",
     [("pipelines/engine/biascorr.go", "h, T, P := k.fit.slopeH*hm0,", "h, T, P := hm0/k.fit.slopeH,")]),
    ("Te left uncorrected",
     [("pipelines/engine/biascorr.go", "k.fit.slopeT*te, k.fit.slopeT*tp", "te, k.fit.slopeT*tp")]),
    ("corrected power from the raw Hm0",
     [("pipelines/engine/biascorr.go", "seastate.BulkStep(bd, h, T, P,", "seastate.BulkStep(bd, hm0, T, P,")]),
    ("corrected power percentiles in reversed order",
     [("s.PowerPercentilesKWm[c.k]", "s.PowerPercentilesKWm[len(s.PowerPercentilesKWm)-1-c.k]")]),
    ("corrected AEP of the raw state",
     [("return corrSum(c, func(s *climate.Summary) float64 { return s.Devices[c.k].AEPMWh })", "return corrSum(c, func(s *climate.Summary) float64 { return device(c).AEPMWh })")]),
    ("corrected state left out of the state files",
     [("pipelines/engine/checkpoint.go", "\t\t\twriteBytes(bw, cs)", "\t\t\twriteBytes(bw, cs[:0])")]),
]


def main():
    root = subprocess.check_output(["git", "rev-parse", "--show-toplevel"], text=True).strip()
    tmp = tempfile.mkdtemp(prefix="swellgrid-mutants-")
    src = os.path.join(tmp, "src")
    shutil.copytree(root, src, ignore=shutil.ignore_patterns(".git", "bin", "test-out", "bench-out", "demo-out", "out"))
    survived = 0
    only = sys.argv[1:]  # optional: run only mutations whose name contains one of these
    try:
        for name, edits in MUTATIONS:
            if only and not any(o in name for o in only):
                continue
            texts = {}
            for e in edits:
                f, old, new = e if len(e) == 3 else (FILE, e[0], e[1])
                if f not in texts:
                    texts[f] = open(os.path.join(src, f)).read()
                text = texts[f]
                if text.count(old) != 1:
                    print("CANNOT APPLY  %s: %r occurs %d times in %s" % (name, old, text.count(old), f))
                    survived += 1
                    break
                texts[f] = text.replace(old, new)
            else:
                origs = {f: open(os.path.join(src, f)).read() for f in texts}
                for f, text in texts.items():
                    open(os.path.join(src, f), "w").write(text)
                r = subprocess.run(["go", "test", "-count=1", "-run", TESTS, "./pipelines/engine/"], cwd=src,
                                   capture_output=True, text=True)
                failed = sorted(set(re.findall(r"--- FAIL: (\S+)", r.stdout)))
                first = next((l.strip() for l in r.stdout.splitlines() if "_test.go:" in l and "largest difference" not in l), "")
                if r.returncode != 0 and failed:
                    print("caught    %-50s by %s: %s" % (name, ",".join(failed), first[:110]))
                elif r.returncode != 0:
                    print("BROKEN    %-50s (does not build?)\n%s" % (name, r.stdout[-1500:] + r.stderr[-1500:]))
                    survived += 1
                else:
                    print("SURVIVED  %s" % name)
                    survived += 1
                for f, text in origs.items():
                    open(os.path.join(src, f), "w").write(text)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    print("%d mutations, %d not caught" % (len(MUTATIONS), survived))
    sys.exit(1 if survived else 0)


if __name__ == "__main__":
    main()
