package bench

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"syscall"
	"time"

	"swellgrid/ingest"
	"swellgrid/pipelines/engine"
	"swellgrid/pipelines/runspec"
)

// Case is one measured run, made in a child process of its own.
type Case struct {
	Data  string   `json:"data"`  // "bulk" or "spectral"
	Part  string   `json:"part"`  // "full" or "half" (the first half of the files)
	Mode  string   `json:"mode"`  // "floor", "ingest" or "pipeline"
	Files []string `json:"files"` // the input files
	Out   string   `json:"out"`   // scratch output directory (pipeline)
	// MemoryLimit, if set, is the pipeline's run.memory_limit (default 2GiB).
	MemoryLimit string `json:"memory_limit,omitempty"`
	// Shard is the share ("I/N") a "shard" case runs into Out; ShardDirs the
	// shard directories a "merge" case merges into Out.
	Shard     string   `json:"shard,omitempty"`
	ShardDirs []string `json:"shard_dirs,omitempty"`
}

// Measure is what a child reports.
type Measure struct {
	Case      Case               `json:"case"`
	WallS     float64            `json:"wall_s"`    // the measured part
	CatalogS  float64            `json:"catalog_s"` // catalog build (floor, ingest: not in WallS)
	Values    int64              `json:"values"`    // values read (floor, ingest)
	Cells     int                `json:"cells"`     // cells (grid) or points (spectral)
	Steps     int                `json:"steps"`     // time steps of the record
	PeakRSS   int64              `json:"peak_rss_bytes"`
	Timings   map[string]float64 `json:"timings_s,omitempty"` // pipeline: the manifest's stage timings
	InputSize int64              `json:"input_bytes"`
	// CPUS is the child's user + system CPU time (getrusage of the child,
	// filled in by Spawn): on a machine shared with other jobs it shows the
	// work done, which the wall time mixes with waiting for a core.
	CPUS float64 `json:"cpu_s"`
}

// RunChild performs one case in this process and returns its figures. The
// peak RSS is this process's VmHWM, so run one case per process.
func RunChild(c Case) (*Measure, error) {
	m := &Measure{Case: c}
	for _, f := range c.Files {
		if st, err := os.Stat(f); err == nil {
			m.InputSize += st.Size()
		}
	}
	spec := runspec.DefaultSpec()
	switch c.Mode {
	case "floor", "ingest":
		t0 := time.Now()
		cat, err := ingest.Open(c.Files, ingest.Options{})
		if err != nil {
			return nil, err
		}
		m.CatalogS = time.Since(t0).Seconds()
		m.Cells, m.Steps = cat.Grid.NCells(), cat.Steps
		var r FloorResult
		if c.Mode == "floor" {
			r, err = ReadFloor(cat, spec.Run.BlockSteps)
		} else {
			r, err = ReadIngest(cat, spec.Run.BlockSteps)
		}
		if err != nil {
			return nil, err
		}
		m.WallS, m.Values = r.Wall.Seconds(), r.Values
	case "pipeline":
		paths, err := specPaths(c.Files)
		if err != nil {
			return nil, err
		}
		spec.Input.Paths = paths
		spec.Output.Dir = c.Out
		if c.MemoryLimit != "" {
			spec.Run.MemoryLimit = c.MemoryLimit
		}
		t0 := time.Now()
		res, err := engine.Run(context.Background(), spec, processOptions())
		if err != nil {
			return nil, err
		}
		m.WallS = time.Since(t0).Seconds()
		m.Cells, m.Steps = res.Cells, res.Steps
		raw, err := os.ReadFile(filepath.Join(c.Out, "manifest.json"))
		if err != nil {
			return nil, err
		}
		var man struct {
			Timings map[string]float64 `json:"timings_s"`
		}
		if err := json.Unmarshal(raw, &man); err != nil {
			return nil, fmt.Errorf("bench: manifest: %v", err)
		}
		m.Timings = man.Timings
	case "shard":
		sh, err := engine.ParseShard(c.Shard)
		if err != nil {
			return nil, err
		}
		if spec.Input.Paths, err = specPaths(c.Files); err != nil {
			return nil, err
		}
		spec.Output.Dir = c.Out
		opt := processOptions()
		opt.Shard = &sh
		t0 := time.Now()
		res, err := engine.Run(context.Background(), spec, opt)
		if err != nil {
			return nil, err
		}
		m.WallS, m.Cells, m.Steps = time.Since(t0).Seconds(), res.Cells, res.Steps
	case "merge":
		t0 := time.Now()
		res, err := engine.Merge(context.Background(), c.Out, c.ShardDirs, processOptions())
		if err != nil {
			return nil, err
		}
		m.WallS, m.Cells, m.Steps = time.Since(t0).Seconds(), res.Cells, res.Steps
	default:
		return nil, fmt.Errorf("bench: unknown mode %q", c.Mode)
	}
	rss, err := PeakRSS()
	if err != nil {
		return nil, err
	}
	m.PeakRSS = rss
	return m, nil
}

// processOptions are the options of a pipeline case: the run owns this
// child process, as the CLI's run owns its own, so the memory plan is
// applied to the process (Options.LimitProcess: Go's soft memory limit from
// the plan, as the CLI sets it). Without it Go's collector lets the heap
// grow to twice what is live, and a case under --memory-limit 256MiB
// peaked at 349 MiB where the CLI peaks at 260 MiB. The field is set by
// name because the before tree (BENCH_BEFORE, built with this package and
// cmd/sgbench copied over it) may predate it; there the run has no plan to
// apply.
func processOptions() engine.Options {
	opt := engine.Options{Restart: true, Version: "bench"}
	if f := reflect.ValueOf(&opt).Elem().FieldByName("LimitProcess"); f.IsValid() && f.Kind() == reflect.Bool {
		f.SetBool(true)
	}
	return opt
}

// PeakRSS is the process's peak resident set size (VmHWM in /proc/self/status,
// proc(5)), in bytes.
func PeakRSS() (int64, error) {
	f, err := os.Open("/proc/self/status")
	if err != nil {
		return 0, fmt.Errorf("bench: peak memory: %v (needs Linux /proc)", err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		line := sc.Text()
		if rest, ok := strings.CutPrefix(line, "VmHWM:"); ok {
			fields := strings.Fields(rest)
			if len(fields) != 2 || fields[1] != "kB" {
				return 0, fmt.Errorf("bench: unexpected VmHWM line %q", line)
			}
			kb, err := strconv.ParseInt(fields[0], 10, 64)
			if err != nil {
				return 0, fmt.Errorf("bench: VmHWM line %q: %v", line, err)
			}
			return kb * 1024, nil
		}
	}
	return 0, fmt.Errorf("bench: no VmHWM in /proc/self/status")
}

// ChildEnv is the environment variable that makes the benchmark program run
// one case (JSON) and print its Measure instead of driving the benchmark.
const ChildEnv = "SWELLGRID_BENCH_CASE"

// Spawn runs one case in a child process (this executable with ChildEnv set)
// and decodes its report.
func Spawn(c Case) (*Measure, error) {
	exe, err := os.Executable()
	if err != nil {
		return nil, err
	}
	return SpawnWith(exe, c)
}

// SpawnWith runs one case in the benchmark program exe (for instance the same
// driver built on the library of an earlier commit, see `make bench`).
func SpawnWith(exe string, c Case) (*Measure, error) {
	raw, err := json.Marshal(c)
	if err != nil {
		return nil, err
	}
	cmd := exec.Command(exe)
	cmd.Env = append(os.Environ(), ChildEnv+"="+string(raw))
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		return nil, fmt.Errorf("bench: case %s/%s/%s: %v\n%s", c.Data, c.Part, c.Mode, err, stderr.String())
	}
	var m Measure
	if err := json.Unmarshal(stdout.Bytes(), &m); err != nil {
		return nil, fmt.Errorf("bench: case %s/%s/%s: bad report %q: %v", c.Data, c.Part, c.Mode, stdout.String(), err)
	}
	if ru, ok := cmd.ProcessState.SysUsage().(*syscall.Rusage); ok {
		m.CPUS = float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
	}
	return &m, nil
}
