package bench

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"syscall"
	"time"

	"swellgrid/pipelines/synth"
)

// Grid200Scenario is the memory benchmark's large grid: an invented 200 x
// 200 regular bulk grid (40 000 cells), 3-hourly, NetCDF-4 with zlib, one
// file per month.
func Grid200Scenario(months int) synth.Scenario {
	s := BulkScenario(1)
	s.Name = "sgbench_grid200"
	s.Title = "swellgrid benchmark: synthetic regular bulk grid 200 x 200, 3-hourly, one file per month"
	s.Grid = synth.Grid{Kind: synth.Regular, NX: 200, NY: 200, LonMin: -40, LonMax: -30.05, LatMin: 40, LatMax: 49.95}
	s.Months, s.Seed = months, 9003
	return s
}

// MemCase is one peak-RSS case of the memory benchmark: the swellgrid
// executable run as a child process (run or merge), its peak resident set
// from the child's rusage (ru_maxrss, as /usr/bin/time -v reports it).
type MemCase struct {
	Name    string
	Data    string // data set description
	Limit   string // --memory-limit ("" = the default, 2GiB)
	Target  int64  // bytes the peak RSS should stay within
	Args    []string
	PeakRSS int64 // bytes
	WallS   float64
	CPUS    float64
	Passes  int
	Err     string
}

// RunMemCase runs the executable with c.Args, records its peak RSS, wall and
// CPU time, and the number of passes the run logged.
func RunMemCase(bin string, c *MemCase, log io.Writer) {
	var stderr bytes.Buffer
	cmd := exec.Command(bin, c.Args...)
	cmd.Stdout, cmd.Stderr = io.Discard, &stderr
	t0 := time.Now()
	err := cmd.Run()
	c.WallS = time.Since(t0).Seconds()
	if st := cmd.ProcessState; st != nil {
		if ru, ok := st.SysUsage().(*syscall.Rusage); ok {
			c.PeakRSS = ru.Maxrss * 1024 // kilobytes on Linux
			c.CPUS = float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)/1e6
		}
	}
	if m := regexp.MustCompile(`passes=(\d+)`).FindSubmatch(stderr.Bytes()); m != nil {
		c.Passes, _ = strconv.Atoi(string(m[1]))
	}
	if err != nil {
		c.Err = fmt.Sprintf("%v: %s", err, lastLine(stderr.String()))
	}
	fmt.Fprintf(log, "%-34s limit %-7s peak RSS %6.0f MiB (target %5.0f MiB) wall %6.1f s cpu %6.1f s passes %d %s\n",
		c.Name, orDefault(c.Limit), float64(c.PeakRSS)/(1<<20), float64(c.Target)/(1<<20), c.WallS, c.CPUS, c.Passes, c.Err)
}

func lastLine(s string) string {
	l := strings.Split(strings.TrimSpace(s), "\n")
	return l[len(l)-1]
}

func orDefault(l string) string {
	if l == "" {
		return "2GiB"
	}
	return l
}

// MemMarkdown is the memory benchmark's table.
func MemMarkdown(cases []*MemCase, host string) string {
	var b strings.Builder
	fmt.Fprintf(&b, "Machine: %s. Peak RSS is the child's ru_maxrss; target = the limit plus the stated overhead (or the issue's figure).\n\n", host)
	b.WriteString("| case | data | memory limit | passes | peak RSS | target | met | wall s | CPU s |\n|---|---|---|---:|---:|---:|---|---:|---:|\n")
	for _, c := range cases {
		met := "yes"
		if c.Err != "" {
			met = "error: " + c.Err
		} else if c.PeakRSS > c.Target {
			met = "**no**"
		}
		fmt.Fprintf(&b, "| %s | %s | %s | %d | %.0f MiB | %.0f MiB | %s | %.1f | %.1f |\n", c.Name, c.Data, orDefault(c.Limit), c.Passes,
			float64(c.PeakRSS)/(1<<20), float64(c.Target)/(1<<20), met, c.WallS, c.CPUS)
	}
	return b.String()
}

// WriteMemJSON writes the cases as JSON beside the table.
func WriteMemJSON(path string, cases []*MemCase) error {
	b, err := json.MarshalIndent(cases, "", "  ")
	if err != nil {
		return err
	}
	return os.WriteFile(path, b, 0o644)
}

// scratch is a fresh scratch directory under root.
func scratch(root, name string) string {
	d := filepath.Join(root, name)
	os.RemoveAll(d)
	return d
}

// MemCases lists the memory benchmark's cases over the bulk benchmark data
// (files) and the 200 x 200 grid (grid200), writing under root.
func MemCases(files []string, grid200 []string, root string, overhead int64) []*MemCase {
	run := func(in []string, out, limit string, extra ...string) []string {
		a := []string{"run", "--out", out, "--workers", "2", "--checkpoint-every", "60"}
		if limit != "" {
			a = append(a, "--memory-limit", limit)
		}
		for _, f := range in {
			a = append(a, "--input", f)
		}
		return append(a, extra...)
	}
	var cs []*MemCase
	bulkDir := filepath.Dir(files[0])
	g200Dir := filepath.Dir(grid200[0])
	cs = append(cs,
		&MemCase{Name: "bulk 100x100, 10 years", Data: "bulk benchmark (120 files)", Limit: "256MiB", Target: 360e6,
			Args: run([]string{bulkDir}, scratch(root, "bulk256"), "256MiB")},
		&MemCase{Name: "bulk 100x100, 10 years", Data: "bulk benchmark (120 files)", Limit: "", Target: 2<<30 + overhead,
			Args: run([]string{bulkDir}, scratch(root, "bulk2g"), "")},
		&MemCase{Name: "grid 200x200", Data: fmt.Sprintf("200 x 200 bulk (%d files)", len(grid200)), Limit: "256MiB", Target: 256<<20 + overhead,
			Args: run([]string{g200Dir}, scratch(root, "g200"), "256MiB")},
	)
	// Merge: two shards of the 200 x 200 grid, then their merge, all under
	// 256MiB (the merge case is the merge process alone).
	sh := scratch(root, "shards")
	for i := 1; i <= 2; i++ {
		cs = append(cs, &MemCase{Name: fmt.Sprintf("grid 200x200 shard %d/2", i), Data: "200 x 200 bulk", Limit: "256MiB", Target: 256<<20 + overhead,
			Args: run([]string{g200Dir}, filepath.Join(sh, strconv.Itoa(i)), "256MiB", "--shard", fmt.Sprintf("%d/2", i))})
	}
	cs = append(cs, &MemCase{Name: "merge of the 2 shards", Data: "200 x 200 bulk", Limit: "256MiB", Target: 256<<20 + overhead,
		Args: []string{"merge", "--out", scratch(root, "merged"), "--workers", "2", "--memory-limit", "256MiB", filepath.Join(sh, "1"), filepath.Join(sh, "2")}})
	return cs
}
