package engine

import (
	"fmt"
	"strings"
	"time"

	"swellgrid/grid"
	"swellgrid/ingest"
	"swellgrid/pipelines/fault"
	"swellgrid/pipelines/runspec"
)

// SlurmPlan is the sizing of a sharded run: how many shards, and how much
// memory each array task asks Slurm for, so that every shard reads its
// files once (one pass) within its budget. The budget a task runs with is
// its request less ProcessOverhead (what the process takes beyond
// run.memory_limit), so that a task sized by the plan is not killed by the
// scheduler.
type SlurmPlan struct {
	Cells, NX, NY int  // the grid (NX 0: a point set, NY its points)
	Steps, Years  int  // the record: time steps, years with data
	Structured    bool // shards hold whole rows
	// The memory model (budget.go): per cell of a pass, fixed part, cache.
	PerCellBytes, FixedBytes, CacheBytes int64
	Shards                               int   // array tasks
	UnitsPerShard                        int   // rows (or points) of the largest shard
	CellsPerShard                        int   // cells of the largest shard
	BudgetBytes                          int64 // --memory-limit of each task
	MemBytes                             int64 // sbatch --mem of each task (budget + ProcessOverhead)
	// ChunkRows is the inputs' largest chunk extent along the rows (points),
	// 0 when unchunked; ReadAmplification is the bytes the shards decompress
	// over the bytes they need (chunks that a shard boundary cuts are
	// decompressed by both shards); ChunkNote says how to rechunk when the
	// chunks span the whole grid.
	ChunkRows         int
	ReadAmplification float64
	ChunkVar          string // a variable of ChunkRows and its chunk shape
	ChunkShape        string
	ChunkNote         string
	// CellsPerPass is what one pass holds under BudgetBytes (>= CellsPerShard).
	CellsPerPass int
	// MergeBudgetBytes and MergeMemBytes are the merge job's --memory-limit
	// and sbatch --mem: a task's, or more when the end products of the whole
	// grid need more (productLimit), so that the merge is not refused.
	MergeBudgetBytes, MergeMemBytes int64
}

// slurmModel is what the planner needs of a run: the grid and the memory
// model of budget.go.
type slurmModel struct {
	cells, nx, ny, steps, years     int
	chunkRows                       int    // ingest.Catalog.RowChunks
	chunkDim                        string // the rows' dimension in chunkShape
	chunkVar, chunkFile, chunkShape string
	// fileSteps are chunkFile's time steps, minSteps the fewest of any
	// file with a time axis (rechunkSpec: nccopy refuses a chunk longer
	// than a file's dimension)
	fileSteps, minSteps int
	blocks              cellBlocks // the grid's cell blocks (a shard holds whole blocks)
	chunks              chunkModel
	structured          bool
	perCell, perResult  float64
	fixed               int64
}

func (j *job) slurmModel() slurmModel {
	g := j.cat.Grid
	perCell, perResult, fixed := j.eng.memoryModel()
	m := slurmModel{cells: g.NCells(), nx: g.NX, ny: g.NY, steps: j.cat.Steps, years: j.eng.recordYears(), chunks: chunkModelOf(j.cat),
		structured: g.Kind != grid.Points && g.Structured(), perCell: perCell, perResult: perResult, fixed: fixed}
	if !m.structured {
		m.nx, m.ny = 1, g.NCells()
	}
	m.blocks = blocksFor(m.ny, m.nx)
	m.chunkRows, m.chunkDim, m.chunkVar, m.chunkFile, m.chunkShape = j.cat.RowChunks()
	for _, f := range j.cat.Files {
		if f.Static {
			continue
		}
		if f.Path == m.chunkFile {
			m.fileSteps = f.Steps
		}
		if m.minSteps == 0 || f.Steps < m.minSteps {
			m.minSteps = f.Steps
		}
	}
	return m
}

// planSlurm sizes the shards: from mem (the Slurm request per task, bytes;
// 0: not given) the number of shards whose cells fit one pass, from shards
// (0: not given) the memory per task; with both it checks that they fit.
func planSlurm(m slurmModel, mem int64, shards int) (*SlurmPlan, error) {
	p := &SlurmPlan{Cells: m.cells, NX: m.nx, NY: m.ny, Steps: m.steps, Years: m.years, Structured: m.structured,
		PerCellBytes: int64(m.perCell), FixedBytes: m.fixed}
	if !m.structured {
		p.NX = 0
	}
	unit := "rows"
	if !m.structured {
		unit = "points"
	}
	if m.blocks.n == 0 {
		m.blocks = blocksFor(m.ny, m.nx)
	}
	// cells of the largest shard of n (Shard.Cells: whole blocks)
	shardCells := func(n int) int { return m.blocks.largestShard(n) }
	bunit := strings.TrimSuffix(unit, "s")
	free := mem > 0 && shards == 0 // the plan counts the shards
	passCells := func(budget int64) int {
		pl, err := planMemory(budget, m.chunks, m.perCell, m.perResult, m.fixed, shardCells(1), 0)
		if err != nil {
			return 0
		}
		return pl.passCells
	}
	switch {
	case mem == 0 && shards == 0:
		return nil, fmt.Errorf("cluster slurm: give --mem (the shards are counted for it) or --shards (the memory per shard is computed), or both (checked)")
	case shards > m.blocks.n:
		return nil, fmt.Errorf("cluster slurm: --shards %d: the grid has only %d %s, so at most %d shards; use fewer shards", shards, m.blocks.n, m.blocks.what(bunit), m.blocks.n)
	}
	if mem > 0 {
		budget := mem - ProcessOverhead
		per := 0
		if budget >= 16<<20 {
			per = passCells(budget)
		}
		// the fewest shards whose largest fits one pass
		need := 0
		for n := 1; n <= m.blocks.n; n++ {
			if shardCells(n) <= per {
				need = n
				break
			}
		}
		if need == 0 {
			block := shardCells(m.blocks.n) // one block
			what := bunit
			if m.blocks.rows > 1 {
				what = fmt.Sprintf("block of %d %ss (the tables' row groups)", m.blocks.rows, bunit)
			}
			need := neededLimit(m.chunks, m.perCell, m.perResult, m.fixed, shardCells(1), 0, block) + ProcessOverhead
			return nil, fmt.Errorf("cluster slurm: --mem %s cannot hold one %s of the grid (%d cells of %s each, plus %s fixed and %s of chunk cache and decompression, plus %s for the process): give --mem %s or more",
				SizeText(mem), what, block, kib(m.perCell), mib(m.fixed), mib(m.chunks.cMemory(max(budget, 16<<20))), mib(ProcessOverhead), SizeText(roundUp(need, 1<<20)))
		}
		if shards == 0 {
			shards = need
		} else if shards < need {
			return nil, fmt.Errorf("cluster slurm: --shards %d with --mem %s cannot fit: a shard of %d %s (%d cells) needs more than one pass (%d cells fit one pass under a budget of %s, so each shard would read its files %d times); give --shards %d or more, or --mem %s or more",
				shards, SizeText(mem), shardCells(shards)/m.nx, unit, shardCells(shards), per, SizeText(budget), (shardCells(shards)+per-1)/per, need, SizeText(memFor(m, shardCells(shards))))
		}
		p.Shards, p.BudgetBytes, p.MemBytes, p.CellsPerPass = shards, budget, mem, per
	} else {
		p.Shards = shards
		p.MemBytes = memFor(m, shardCells(shards))
		p.BudgetBytes = p.MemBytes - ProcessOverhead
		p.CellsPerPass = passCells(p.BudgetBytes)
	}
	if free && m.chunkRows > 1 {
		p.Shards = alignedShards(m, p.Shards)
	}
	p.ChunkRows, p.ChunkVar, p.ChunkShape = m.chunkRows, m.chunkVar, m.chunkShape
	p.ReadAmplification = readAmplification(m, p.Shards)
	switch {
	case p.Shards > 1 && m.chunkRows >= m.ny:
		p.ChunkNote = fmt.Sprintf("the inputs' chunks span the whole grid (%s of %s: %s), so every shard decompresses every chunk; rechunk each file first, e.g. `nccopy -c %s IN.nc OUT.nc` (netcdf-bin), so that each shard reads only its own %s",
			m.chunkVar, m.chunkFile, m.chunkShape, rechunkSpec(m, p.Shards), unit)
	case p.ReadAmplification > 1:
		p.ChunkNote = fmt.Sprintf("the shard boundaries cut the inputs' chunks of %d %s (%s of %s: %s), so neighbouring shards decompress the same chunks; rechunk each file first, e.g. `nccopy -c %s IN.nc OUT.nc` (netcdf-bin), so that each shard reads only its own %s",
			m.chunkRows, unit, m.chunkVar, m.chunkFile, m.chunkShape, rechunkSpec(m, p.Shards), unit)
	}
	p.CellsPerShard = shardCells(p.Shards)
	p.UnitsPerShard = p.CellsPerShard / m.nx
	p.CacheBytes = m.chunks.cMemory(p.BudgetBytes)
	return p, nil
}

// readAmplification is what shards of n decompress over what they read
// (Slurm plan): a shard of rows r0..r1-1 decompresses the chunks of
// chunkRows rows that cover them whole (floor(r0/c)c .. ceil(r1/c)c, at
// most the grid); 1 when unchunked or every boundary falls on a tile.
func readAmplification(m slurmModel, n int) float64 {
	c := m.chunkRows
	if c <= 1 || m.ny == 0 {
		return 1
	}
	got := 0
	for i := 1; i <= n; i++ {
		c0, c1 := m.blocks.shard(i, n)
		r0, r1 := c0/m.nx, c1/m.nx
		got += min((r1+c-1)/c*c, m.ny) - r0/c*c
	}
	return float64(got) / float64(m.ny)
}

// rechunkSpec is nccopy's -c argument that puts every shard boundary of n
// shards on a chunk boundary: the rows' dimension (by name, so that a time
// chunk of the same length is left alone) chunked by the greatest common
// divisor of the boundaries, every other dimension as it is, except that a
// chunk spanning chunkFile's whole time axis is cut to the shortest file's
// steps: nccopy refuses ("Bad chunk sizes") a chunk longer than the
// dimension, so time/248 of a 31-day 3-hourly month fails on February's 224
// steps. (That dimension is matched by its chunk size, as RowChunks names
// the rows' dimension only; another dimension as long as that file's record
// would be cut too.) Every dimension is named: nccopy 4.9 left the rows of
// a file chunked by time steps unchanged when given the rows' dimension
// alone.
func rechunkSpec(m slurmModel, n int) string {
	g := boundaryGCD(m, n)
	parts := strings.Split(m.chunkShape, ",")
	for k, p := range parts {
		dim, size, _ := strings.Cut(p, "/")
		switch {
		case dim == m.chunkDim && size == fmt.Sprint(m.chunkRows):
			parts[k] = fmt.Sprintf("%s/%d", dim, g)
		case dim != m.chunkDim && m.minSteps > 0 && m.fileSteps > m.minSteps && size == fmt.Sprint(m.fileSteps):
			parts[k] = fmt.Sprintf("%s/%d", dim, m.minSteps)
		}
	}
	return strings.Join(parts, ",")
}

// alignedShards is the shard count a plan that counts its shards takes,
// from need (the fewest that fit) up to 2 need (each shard smaller, so it
// still fits): the first whose boundaries all fall on the inputs' chunk
// tiles (read amplification 1); where none does, so that the files must be
// rechunked, the one whose boundaries share the largest divisor (the
// smallest such count), because rechunkSpec chunks the rows by that
// divisor: on a 50-row grid 4 shards (boundaries 12, 25, 37) would ask for
// chunks of one row, 5 shards (10, 20, 30, 40) for chunks of 10 rows, and
// tiny chunks slow every later read of the files.
func alignedShards(m slurmModel, need int) int {
	hi := min(m.blocks.n, 2*need)
	for n := need; n <= hi; n++ {
		if readAmplification(m, n) == 1 {
			return n
		}
	}
	best, bestG := need, boundaryGCD(m, need)
	for n := need + 1; n <= hi; n++ {
		if g := boundaryGCD(m, n); g > bestG {
			best, bestG = n, g
		}
	}
	return best
}

// boundaryGCD is the greatest common divisor of the grid's rows and the
// first row of every shard of n: the longest chunk along the rows whose
// tiles every shard boundary respects.
func boundaryGCD(m slurmModel, n int) int {
	g := m.ny
	for i := 1; i < n; i++ {
		c0, _ := m.blocks.shard(i+1, n)
		g = gcd(g, c0/m.nx)
	}
	return g
}

func gcd(a, b int) int {
	for b != 0 {
		a, b = b, a%b
	}
	return a
}

// memFor is the Slurm request (rounded up to 64 MiB) whose budget holds
// cells in one pass.
func memFor(m slurmModel, cells int) int64 {
	return roundUp(neededLimit(m.chunks, m.perCell, m.perResult, m.fixed, cells, 0, cells)+ProcessOverhead, 64<<20)
}

func roundUp(b, to int64) int64 { return (b + to - 1) / to * to }

// SizeText writes bytes as Slurm and --memory-limit read them: whole GiB
// as "8G", else whole MiB as "3968M".
func SizeText(b int64) string {
	if b%(1<<30) == 0 {
		return fmt.Sprintf("%dG", b>>30)
	}
	return fmt.Sprintf("%dM", (b+(1<<20)-1)>>20)
}

// Text is the plan as `cluster slurm` prints it.
func (p *SlurmPlan) Text() string {
	var b strings.Builder
	if p.Structured {
		fmt.Fprintf(&b, "grid:     %d cells (%d x %d rows), %d steps, %d years with data\n", p.Cells, p.NX, p.NY, p.Steps, p.Years)
	} else {
		fmt.Fprintf(&b, "points:   %d, %d steps, %d years with data\n", p.Cells, p.Steps, p.Years)
	}
	fmt.Fprintf(&b, "model:    %s per cell of a pass (state and read buffers), %s fixed (catalog, table writers), %s chunk cache\n",
		kib(float64(p.PerCellBytes)), mib(p.FixedBytes), mib(p.CacheBytes))
	unit := "rows"
	if !p.Structured {
		unit = "points"
	}
	fmt.Fprintf(&b, "shards:   %d (at most %d %s, %d cells each; one pass holds %d cells)\n", p.Shards, p.UnitsPerShard, unit, p.CellsPerShard, p.CellsPerPass)
	fmt.Fprintf(&b, "memory:   --mem %s per task = --memory-limit %s + %s for the process\n", SizeText(p.MemBytes), SizeText(p.BudgetBytes), mib(ProcessOverhead))
	if p.MergeMemBytes > p.MemBytes {
		fmt.Fprintf(&b, "merge:    --mem %s = --memory-limit %s + %s for the process (the report, atlas.nc and atlas.gpkg of the whole grid)\n", SizeText(p.MergeMemBytes), SizeText(p.MergeBudgetBytes), mib(ProcessOverhead))
	}
	if p.ChunkRows > 0 {
		fmt.Fprintf(&b, "reading:  chunks of %d %s (%s: %s); read amplification %.2f (bytes decompressed / bytes needed)\n", p.ChunkRows, unit, p.ChunkVar, p.ChunkShape, p.ReadAmplification)
	} else {
		fmt.Fprintf(&b, "reading:  unchunked inputs; read amplification 1.00 (bytes decompressed / bytes needed)\n")
	}
	if p.ChunkNote != "" {
		fmt.Fprintf(&b, "note:     %s\n", p.ChunkNote)
	}
	return b.String()
}

// PlanShards sizes a sharded run of spec over the catalog cat (see
// SlurmPlan): the number of shards for a memory request of mem bytes per
// task (0: not given), the memory per task for shards (0: not given), or,
// with both, checks that they fit.
func PlanShards(spec *runspec.Resolved, cat *ingest.Catalog, mem int64, shards int) (*SlurmPlan, error) {
	job, err := newJob(spec, Options{}, cat, time.Now())
	if err != nil {
		return nil, err
	}
	p, err := planSlurm(job.slurmModel(), mem, shards)
	if err != nil {
		return nil, fault.Input(err)
	}
	p.sizeMerge(productLimit(cat.Grid.NCells(), productsOf(spec)))
	return p, nil
}

// sizeMerge sets the merge job's memory: a task's, or the smallest limit
// (rounded up to 64 MiB) that holds need bytes, the end products of the
// whole grid (productLimit), when that is more.
func (p *SlurmPlan) sizeMerge(need int64) {
	p.MergeBudgetBytes, p.MergeMemBytes = p.BudgetBytes, p.MemBytes
	if need > p.MergeBudgetBytes {
		p.MergeBudgetBytes = roundUp(need, 64<<20)
		p.MergeMemBytes = p.MergeBudgetBytes + ProcessOverhead
	}
}
