package bench

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"time"
)

// Config sets up a benchmark run.
type Config struct {
	Cache    string // cache directory of the generated hindcasts
	Markdown string // if set, write the figures as Markdown here
	Only     string // "bulk", "spectral", "" (both) or "shards" (the sharded run only)
	// Before, if set, is the benchmark program built on the library of an
	// earlier commit (`make bench` builds it from BENCH_BEFORE): every
	// pipeline case then runs with it too, right before the current one.
	Before string
	// Parts are the record lengths measured: "full", "half" (default both).
	Parts []string
	// SkipMem256 leaves out the bulk benchmark under --memory-limit 256MiB
	// (about 9 minutes a program here): for a quick before/after of the
	// default cases.
	SkipMem256 bool
	// Shards adds the sharded-run benchmark (ShardScenario: a single run
	// against 4 shards and their merge), with Before too if set.
	Shards   bool
	Log, Out io.Writer // progress and the report
}

// Row gathers the cases of one data set and record length.
type Row struct {
	Data, Part              string
	Floor, Ingest, Pipeline *Measure
	Before                  *Measure // the pipeline with Config.Before (nil: not run)
	// Mem256 and Mem256Before: the pipeline with run.memory_limit = 256MiB
	// (bulk, the first record length measured).
	Mem256, Mem256Before *Measure
}

// Targets of the benchmark: pipeline / read floor (issue 9; bulk: the
// 100 x 100 x 10-year target of issue 29).
var Targets = map[string]float64{"bulk": 1.5, "spectral": 1.5}

// MemoryTarget is the largest allowed peak memory of the full record over
// that of half the record.
const MemoryTarget = 1.1

// Mem256TimeTarget is the bulk benchmark's time under --memory-limit 256MiB
// over its time under the default limit (issue 29).
const Mem256TimeTarget = 2.0

// Main generates the data if needed, measures every case and prints the report.
func Main(cfg Config) error {
	logf := func(format string, a ...any) { fmt.Fprintf(cfg.Log, format+"\n", a...) }
	start := time.Now()
	var sets []*Dataset
	if cfg.Only == "" || cfg.Only == "bulk" {
		d, err := Ensure(cfg.Cache, "bulk", BulkScenario(10), logf)
		if err != nil {
			return err
		}
		sets = append(sets, d)
	}
	if cfg.Only == "" || cfg.Only == "spectral" {
		d, err := Ensure(cfg.Cache, "spectral", SpectralScenario(2), logf)
		if err != nil {
			return err
		}
		sets = append(sets, d)
	}
	if len(sets) == 0 && cfg.Only != "shards" {
		return fmt.Errorf("-only %q: want bulk, spectral or shards", cfg.Only)
	}
	if cfg.Only == "shards" {
		cfg.Shards = true
	}
	scratch, err := os.MkdirTemp("", "sgbench-out-")
	if err != nil {
		return err
	}
	defer os.RemoveAll(scratch)
	var rows []*Row
	for _, d := range sets {
		parts := cfg.Parts
		if len(parts) == 0 {
			parts = []string{"full", "half"}
		}
		for _, part := range parts {
			files := d.Files
			if part == "half" {
				files = files[:len(files)/2]
			}
			r := &Row{Data: d.Name, Part: part}
			modes := []string{"floor", "ingest", "pipeline-before", "pipeline"}
			if d.Name == "bulk" && part == parts[0] && !cfg.SkipMem256 {
				modes = append(modes, "mem256-before", "mem256")
			}
			for _, mode := range modes {
				exe, _ := os.Executable()
				if strings.HasSuffix(mode, "-before") {
					if cfg.Before == "" {
						continue
					}
					exe = cfg.Before
				}
				if err := warm(files); err != nil {
					return err
				}
				base := strings.TrimSuffix(mode, "-before")
				c := Case{Data: d.Name, Part: part, Mode: base, Files: files, Out: filepath.Join(scratch, d.Name+"-"+part)}
				if base == "mem256" {
					c.Mode, c.MemoryLimit = "pipeline", "256MiB"
				}
				logf("measuring %s %s record: %s ...", d.Name, part, mode)
				m, err := SpawnWith(exe, c)
				if err != nil {
					return err
				}
				logf("  %.1f s (CPU %.1f s), peak %s", m.WallS, m.CPUS, mib(m.PeakRSS))
				switch mode {
				case "floor":
					r.Floor = m
				case "ingest":
					r.Ingest = m
				case "pipeline-before":
					r.Before = m
				case "mem256":
					r.Mem256 = m
				case "mem256-before":
					r.Mem256Before = m
				default:
					r.Pipeline = m
				}
				os.RemoveAll(c.Out)
			}
			rows = append(rows, r)
		}
	}
	var shardText string
	if cfg.Shards {
		d, err := Ensure(cfg.Cache, "bulk50", ShardScenario(), logf)
		if err != nil {
			return err
		}
		// as generated (one chunk per variable and file: every shard
		// decompresses the whole grid), then rechunked once as the Slurm
		// plan advises (shard boundaries on chunk tiles)
		a, plan, err := AlignShardData(d, logf)
		if err != nil {
			return err
		}
		inputs := []*Dataset{d}
		if a != nil {
			inputs = append(inputs, a)
		}
		var srows []*ShardRow
		exe, _ := os.Executable()
		progs := [][2]string{{cfg.Before, "before"}, {exe, "after"}}
		for _, in := range inputs {
			// the input's read floor, once (the same for both programs)
			if err := warm(in.Files); err != nil {
				return err
			}
			logf("measuring %s: read floor ...", in.Name)
			floor, err := SpawnWith(exe, Case{Data: in.Name, Part: "full", Mode: "floor", Files: in.Files})
			if err != nil {
				return err
			}
			for _, p := range progs {
				if p[0] == "" {
					continue
				}
				r, err := MeasureShards(p[0], p[1], in, scratch, logf)
				if err != nil {
					return err
				}
				r.Floor = floor
				r.Input = "as generated"
				if in != d {
					r.Input = "rechunked as the plan advises"
				}
				srows = append(srows, r)
			}
		}
		shardText = ShardReport(srows, d) + "\nThe Slurm plan for these files (`swellgrid cluster slurm --shards 4`, as generated):\n\n```\n" + plan + "```\n"
	}
	text := shardText
	if len(sets) > 0 {
		text = Report(rows, sets, time.Since(start)) + shardText
	}
	fmt.Fprint(cfg.Out, text)
	if cfg.Markdown != "" {
		if err := os.WriteFile(cfg.Markdown, []byte(text), 0o644); err != nil {
			return err
		}
	}
	return nil
}

// warm reads the files as plain bytes so that every case starts with the
// same (warm) page cache.
func warm(files []string) error {
	buf := make([]byte, 1<<20)
	for _, p := range files {
		f, err := os.Open(p)
		if err != nil {
			return err
		}
		for {
			_, err := f.Read(buf)
			if err != nil {
				break
			}
		}
		f.Close()
	}
	return nil
}

func mib(b int64) string { return fmt.Sprintf("%.0f MiB", float64(b)/(1<<20)) }

// Report formats the figures as Markdown (readable as plain text).
func Report(rows []*Row, sets []*Dataset, total time.Duration) string {
	var b strings.Builder
	host, _ := os.Hostname()
	_ = host
	fmt.Fprintf(&b, "## Figures of the latest run\n\n")
	fmt.Fprintf(&b, "Machine: %s, %d logical CPUs (GOMAXPROCS %d), %s/%s, %s. Page cache warm (every file read once before each case).\n\n",
		cpuModel(), runtime.NumCPU(), runtime.GOMAXPROCS(0), runtime.GOOS, runtime.GOARCH, runtime.Version())
	for _, d := range sets {
		fmt.Fprintf(&b, "- %s: %s; %d files, %.2f GiB\n", d.Name, Describe(d.Scenario), len(d.Files), float64(d.Bytes(d.Files))/(1<<30))
	}
	fmt.Fprintf(&b, "\n| data | record | read floor s | ingest read s | pipeline s | pipeline / floor | target | stream stage / floor | cell-steps/s | spectra/s | peak RSS floor | peak RSS pipeline |\n")
	fmt.Fprintf(&b, "|---|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|\n")
	for _, r := range rows {
		p, f := r.Pipeline, r.Floor
		cs := float64(p.Cells) * float64(p.Steps)
		spectra := "-"
		if r.Data == "spectral" {
			spectra = fmt.Sprintf("%.3g", cs/p.WallS)
		}
		fmt.Fprintf(&b, "| %s | %s (%d steps) | %.1f | %.1f | %.1f | %.2f | %.1f | %.2f | %.3g | %s | %s | %s |\n",
			r.Data, r.Part, p.Steps, f.WallS, r.Ingest.WallS, p.WallS, p.WallS/f.WallS, Targets[r.Data],
			p.Timings["stream_s"]/f.WallS, cs/p.WallS, spectra, mib(f.PeakRSS), mib(p.PeakRSS))
	}
	if anyBefore(rows) {
		fmt.Fprintf(&b, "\nBefore and after, same machine, same run (each pipeline case right after its before case; CPU = user + system of the child process, which on a shared machine shows the work done while the wall time also counts waiting for a core):\n\n")
		fmt.Fprintf(&b, "| data | record | memory limit | read floor s | floor CPU s | before s | after s | before / floor | after / floor | before CPU s | after CPU s | before peak RSS | after peak RSS | before fit_s | after fit_s |\n")
		fmt.Fprintf(&b, "|---|---|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|\n")
		line := func(r *Row, lim string, bm, am *Measure) {
			if bm == nil || am == nil {
				return
			}
			f := r.Floor
			fmt.Fprintf(&b, "| %s | %s | %s | %.1f | %.1f | %.1f | %.1f | %.2f | %.2f | %.1f | %.1f | %s | %s | %.2f | %.2f |\n",
				r.Data, r.Part, lim, f.WallS, f.CPUS, bm.WallS, am.WallS, bm.WallS/f.WallS, am.WallS/f.WallS,
				bm.CPUS, am.CPUS, mib(bm.PeakRSS), mib(am.PeakRSS), bm.Timings["fit_s"], am.Timings["fit_s"])
		}
		for _, r := range rows {
			line(r, "2GiB", r.Before, r.Pipeline)
			line(r, "256MiB", r.Mem256Before, r.Mem256)
		}
	}
	for _, r := range rows {
		if r.Mem256 == nil || r.Pipeline == nil {
			continue
		}
		fmt.Fprintf(&b, "\n%s %s record under --memory-limit 256MiB over the default limit's time: after %.2f", r.Data, r.Part, r.Mem256.WallS/r.Pipeline.WallS)
		if r.Mem256Before != nil && r.Before != nil {
			fmt.Fprintf(&b, ", before %.2f", r.Mem256Before.WallS/r.Before.WallS)
		}
		fmt.Fprintf(&b, " (target %.1f; peak RSS after %s, limit 256 MiB plus the process overhead).\n", Mem256TimeTarget, mib(r.Mem256.PeakRSS))
	}
	if len(rows) >= 2 && rows[0].Data == rows[1].Data {
		fmt.Fprintf(&b, "\nScaling with the record length (full / half):\n\n| data | time ratio | peak memory ratio | memory target |\n|---|---:|---:|---:|\n")
		for i := 0; i+1 < len(rows); i += 2 {
			full, half := rows[i], rows[i+1]
			if full.Data != half.Data {
				break
			}
			fmt.Fprintf(&b, "| %s | %.2f | %.3f | %.1f |\n", full.Data, full.Pipeline.WallS/half.Pipeline.WallS,
				float64(full.Pipeline.PeakRSS)/float64(half.Pipeline.PeakRSS), MemoryTarget)
		}
	}
	fmt.Fprintf(&b, "\nPipeline stages (seconds; busy times of concurrent stages overlap the stream stage's wall time):\n\n")
	keys := map[string]bool{}
	for _, r := range rows {
		for k := range r.Pipeline.Timings {
			keys[k] = true
		}
	}
	var ks []string
	for k := range keys {
		ks = append(ks, k)
	}
	sort.Strings(ks)
	fmt.Fprintf(&b, "| data | record | %s | reader waits |\n|---|---|%s---:|\n", strings.Join(ks, " | "), strings.Repeat("---:|", len(ks)))
	for _, r := range rows {
		t := r.Pipeline.Timings
		fmt.Fprintf(&b, "| %s | %s |", r.Data, r.Part)
		for _, k := range ks {
			fmt.Fprintf(&b, " %.2f |", t[k])
		}
		share := "-"
		if t["stream_s"] > 0 {
			share = fmt.Sprintf("%.0f %%", 100*t["read_wait_s"]/t["stream_s"])
		}
		fmt.Fprintf(&b, " %s |\n", share)
	}
	fmt.Fprintf(&b, "\nWhole benchmark (generation included if it ran): %.1f min.\n", total.Minutes())
	return b.String()
}

func anyBefore(rows []*Row) bool {
	for _, r := range rows {
		if r.Before != nil {
			return true
		}
	}
	return false
}

func cpuModel() string {
	raw, err := os.ReadFile("/proc/cpuinfo")
	if err != nil {
		return "unknown CPU"
	}
	for _, line := range strings.Split(string(raw), "\n") {
		if k, v, ok := strings.Cut(line, ":"); ok && strings.TrimSpace(k) == "model name" {
			return strings.TrimSpace(v)
		}
	}
	return "unknown CPU"
}
