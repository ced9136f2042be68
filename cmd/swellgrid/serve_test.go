package main

import (
	"bytes"
	"path/filepath"
	"strings"
	"testing"
)

// `swellgrid serve` refuses an address other machines can reach (exit 2,
// saying how to allow it) before it opens the run, and a directory that is
// not a finished run (exit 2).
func TestServeRefusals(t *testing.T) {
	var stderr bytes.Buffer
	if code := mainCode([]string{"serve", "--addr", "0.0.0.0:8765", t.TempDir()}, &stderr); code != 2 || !strings.Contains(stderr.String(), "--allow-remote") {
		t.Errorf("serve --addr 0.0.0.0:8765: exit %d, stderr %q; want 2 and a word on --allow-remote", code, stderr.String())
	}
	stderr.Reset()
	if code := mainCode([]string{"serve", "--addr", "127.0.0.1:0", filepath.Join(t.TempDir(), "none")}, &stderr); code != 2 || !strings.Contains(stderr.String(), "manifest.json") {
		t.Errorf("serve of a missing run: exit %d, stderr %q; want 2 and the missing manifest named", code, stderr.String())
	}
}
