package main

import (
	"io"
	"log/slog"
	"swellgrid/pipelines/engine"
	"sync"
	"time"

	"github.com/schollz/progressbar/v3"
)

// newBarProgress draws one progress bar per stage on w (a terminal), with
// counts, rate and time left.
func newBarProgress(w io.Writer) engine.Progress { return &barProgress{w: w} }

type barProgress struct {
	w   io.Writer
	bar *progressbar.ProgressBar
}

func (p *barProgress) Start(stage string, total, done int64) {
	p.bar = progressbar.NewOptions64(total,
		progressbar.OptionSetWriter(p.w), progressbar.OptionSetDescription(stage),
		progressbar.OptionShowCount(), progressbar.OptionShowIts(), progressbar.OptionSetItsString("steps"),
		progressbar.OptionSetPredictTime(true), progressbar.OptionThrottle(200*time.Millisecond),
		progressbar.OptionOnCompletion(func() { io.WriteString(p.w, "\n") }))
	if done > 0 {
		p.bar.Set64(done)
	}
}
func (p *barProgress) Add(n int64) {
	if p.bar != nil {
		p.bar.Add64(n)
	}
}
func (p *barProgress) Done() {
	if p.bar != nil {
		p.bar.Finish()
		p.bar = nil
	}
}

// newLogProgress writes a log line per stage every interval, with the count,
// rate and estimated time left: for runs whose stderr is not a terminal.
func newLogProgress(log *slog.Logger, every time.Duration) engine.Progress {
	return &logProgress{log: log, every: every}
}

type logProgress struct {
	mu          sync.Mutex
	log         *slog.Logger
	every       time.Duration
	stage       string
	total, done int64
	start, last time.Time
	base        int64
}

func (p *logProgress) Start(stage string, total, done int64) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.stage, p.total, p.done, p.base = stage, total, done, done
	p.start, p.last = time.Now(), time.Now()
	p.log.Info("stage", "stage", stage, "total", total, "done", done)
}

func (p *logProgress) Add(n int64) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.done += n
	if time.Since(p.last) >= p.every {
		p.last = time.Now()
		el := time.Since(p.start).Seconds()
		rate := float64(p.done-p.base) / el
		left := time.Duration(0)
		if rate > 0 {
			left = time.Duration(float64(p.total-p.done)/rate) * time.Second
		}
		p.log.Info("progress", "stage", p.stage, "done", p.done, "total", p.total, "rate_per_s", int64(rate), "eta", left.Round(time.Second).String())
	}
}

func (p *logProgress) Done() {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.log.Info("stage done", "stage", p.stage, "done", p.done, "seconds", time.Since(p.start).Round(time.Millisecond).Seconds())
}
