package bench

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"

	"swellgrid/ingest"
	"swellgrid/pipelines/engine"
	"swellgrid/pipelines/runspec"
	"swellgrid/pipelines/synth"
)

// ShardScenario is the hindcast of the sharded-run benchmark (issue 29): the
// bulk benchmark's invented shelf on a 50 x 50 grid, 5 years.
func ShardScenario() synth.Scenario {
	s := BulkScenario(5)
	s.Name = "sgbench_bulk50"
	s.Title = "swellgrid benchmark: synthetic regular bulk grid 50 x 50, 3-hourly, one file per month"
	s.Grid.NX, s.Grid.NY = 50, 50
	s.Grid.LonMax, s.Grid.LatMax = -30.2, 49.8
	return s
}

// ShardCount is the number of shards of the sharded-run benchmark.
const ShardCount = 4

// ShardRow is the sharded-run benchmark of one program: a single run, then
// ShardCount shards one after another and their merge, each in a child.
type ShardRow struct {
	Program string
	Input   string // which input: as generated, or rechunked as the plan advises
	Single  *Measure
	Shards  []*Measure
	Merge   *Measure
	// Floor is the read floor of the input (ReadFloor, measured once per
	// input), for the single run's end-to-end target (EndToEndTarget).
	Floor *Measure
}

// Targets of the sharded run (issue 29): CPU of the shards and the merge
// over the single run's, and the merge's wall time over the single run's.
const (
	ShardCPUTarget  = 1.25
	MergeWallTarget = 0.20
	// EndToEndTarget is the single run's wall time over the read floor on
	// this 50 x 50 x 5-year grid (issue 29).
	EndToEndTarget   = 3.0
	shardsCaseFormat = "%d/%d"
)

// MeasureShards runs the sharded-run benchmark on d with the program exe
// (scratch holds the outputs, removed after).
func MeasureShards(exe, program string, d *Dataset, scratch string, logf func(string, ...any)) (*ShardRow, error) {
	r := &ShardRow{Program: program}
	if err := warm(d.Files); err != nil {
		return nil, err
	}
	root := filepath.Join(scratch, "shards-"+program)
	defer os.RemoveAll(root)
	logf("measuring %s: single run (%s) ...", d.Name, program)
	m, err := SpawnWith(exe, Case{Data: d.Name, Part: "full", Mode: "pipeline", Files: d.Files, Out: filepath.Join(root, "single")})
	if err != nil {
		return nil, err
	}
	r.Single = m
	var dirs []string
	for i := 1; i <= ShardCount; i++ {
		dir := filepath.Join(root, fmt.Sprintf("shard%d", i))
		logf("measuring %s: shard %d/%d (%s) ...", d.Name, i, ShardCount, program)
		m, err := SpawnWith(exe, Case{Data: d.Name, Part: "full", Mode: "shard", Files: d.Files, Out: dir, Shard: fmt.Sprintf(shardsCaseFormat, i, ShardCount)})
		if err != nil {
			return nil, err
		}
		r.Shards, dirs = append(r.Shards, m), append(dirs, dir)
	}
	logf("measuring %s: merge (%s) ...", d.Name, program)
	if r.Merge, err = SpawnWith(exe, Case{Data: d.Name, Part: "full", Mode: "merge", Files: d.Files, Out: filepath.Join(root, "merged"), ShardDirs: dirs}); err != nil {
		return nil, err
	}
	return r, nil
}

// ShardReport formats the sharded-run rows as Markdown.
func ShardReport(rows []*ShardRow, d *Dataset) string {
	var b strings.Builder
	fmt.Fprintf(&b, "\nSharded run (%s; %d shards one after another, then the merge; CPU = user + system of each child):\n\n", Describe(d.Scenario), ShardCount)
	fmt.Fprintf(&b, "| input | program | read floor s | single s | single s / floor | target | single CPU s | shards CPU s | merge s | merge CPU s | (shards + merge) CPU / single | target | merge s / single s | target |\n")
	fmt.Fprintf(&b, "|---|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|\n")
	for _, r := range rows {
		var cpu float64
		for _, s := range r.Shards {
			cpu += s.CPUS
		}
		floor, ratio := "-", "-"
		if r.Floor != nil && r.Floor.WallS > 0 {
			floor, ratio = fmt.Sprintf("%.1f", r.Floor.WallS), fmt.Sprintf("%.2f", r.Single.WallS/r.Floor.WallS)
		}
		fmt.Fprintf(&b, "| %s | %s | %s | %.1f | %s | %.1f | %.1f | %.1f | %.1f | %.1f | %.2f | %.2f | %.2f | %.2f |\n", r.Input, r.Program, floor, r.Single.WallS, ratio, EndToEndTarget,
			r.Single.CPUS, cpu, r.Merge.WallS, r.Merge.CPUS, (cpu+r.Merge.CPUS)/r.Single.CPUS, ShardCPUTarget, r.Merge.WallS/r.Single.WallS, MergeWallTarget)
	}
	return b.String()
}

// planAdvice finds nccopy's -c argument in a `cluster slurm` plan text
// (engine.SlurmPlan.Text: "... `nccopy -c SPEC IN.nc OUT.nc` ...").
var planAdvice = regexp.MustCompile("`nccopy -c (\\S+) IN\\.nc OUT\\.nc`")

// AlignShardData is d as an analyst following the Slurm plan would shard
// it: the plan for ShardCount shards (engine.PlanShards, what `swellgrid
// cluster slurm --shards 4` prints) is made on d, and when its note says the
// chunks span the grid, every file is rechunked once with the plan's own
// `nccopy -c` command (netcdf-bin) into a cache directory beside d's, reused
// while it is complete and made by the same advice. The plan text is
// returned with the data set (nil, when the plan gives no rechunk advice:
// d's shards already read their own chunks).
func AlignShardData(d *Dataset, logf func(string, ...any)) (*Dataset, string, error) {
	text, err := shardPlan(d.Files)
	if err != nil {
		return nil, "", err
	}
	m := planAdvice.FindStringSubmatch(text)
	if m == nil {
		return nil, text, nil
	}
	dir := d.Dir + "-rechunked"
	done := filepath.Join(dir, doneMarker)
	if raw, err := os.ReadFile(done); err != nil || strings.TrimSpace(string(raw)) != m[1] {
		logf("rechunking %s as the Slurm plan advises (nccopy -c %s; once, later runs reuse it)", d.Name, m[1])
		if err := os.RemoveAll(dir); err != nil {
			return nil, "", fmt.Errorf("bench: clear %s: %v", dir, err)
		}
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return nil, "", err
		}
		for _, f := range d.Files {
			out, err := exec.Command("nccopy", "-c", m[1], f, filepath.Join(dir, filepath.Base(f))).CombinedOutput()
			if err != nil {
				return nil, "", fmt.Errorf("bench: nccopy -c %s %s (netcdf-bin): %v\n%s", m[1], f, err, out)
			}
		}
	}
	a := *d
	a.Name, a.Dir, a.Files = d.Name+"-rechunked", dir, nil
	for _, f := range d.Files {
		a.Files = append(a.Files, filepath.Join(dir, filepath.Base(f)))
	}
	if _, err := os.Stat(done); err != nil {
		// the plan of the rechunked files must find nothing to rechunk:
		// nccopy leaves a variable's chunks as they are, without a word,
		// when the chunks asked for are below its minimum chunk size (-M)
		again, err := shardPlan(a.Files)
		if err != nil {
			return nil, "", err
		}
		if planAdvice.MatchString(again) {
			return nil, "", fmt.Errorf("bench: nccopy -c %s left the chunks of the files in %s unaligned (chunks below nccopy's minimum chunk size are not applied); the plan of the rechunked files:\n%s", m[1], dir, again)
		}
		if err := os.WriteFile(done, []byte(m[1]+"\n"), 0o644); err != nil {
			return nil, "", err
		}
	}
	return &a, text, nil
}

// shardPlan is the Slurm plan's text for ShardCount shards of files
// (engine.PlanShards with the default spec, as `swellgrid cluster slurm
// --shards 4` prints it).
func shardPlan(files []string) (string, error) {
	cat, err := ingest.Open(files, ingest.Options{})
	if err != nil {
		return "", err
	}
	spec := runspec.DefaultSpec()
	if spec.Input.Paths, err = specPaths(files); err != nil {
		return "", err
	}
	spec.Output.Dir = filepath.Join(os.TempDir(), "sgbench-plan")
	rs, err := spec.Resolve()
	if err != nil {
		return "", err
	}
	p, err := engine.PlanShards(rs, cat, 0, ShardCount)
	if err != nil {
		return "", err
	}
	return p.Text(), nil
}
