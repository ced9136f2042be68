package ingest

import (
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// Station files (CSV and NetCDF, given to `validate --obs`) are refused
// unless they are regular files, without blocking: a named pipe with no
// writer is named as one within a deadline (a plain open would block for
// ever). The same function, OpenRegular, guards the hindcast inputs, the
// bathymetry and every file a spec names (tested through the command in
// cmd/swellgrid, TestSpecialFilesRefused).
func TestStationFIFORefused(t *testing.T) {
	dir := t.TempDir()
	for _, name := range []string{"station.csv", "station.nc"} {
		p := filepath.Join(dir, name)
		if err := syscall.Mkfifo(p, 0o644); err != nil {
			t.Fatal(err)
		}
		done := make(chan error, 1)
		go func() {
			_, err := ReadObservations([]string{p})
			done <- err
		}()
		select {
		case err := <-done:
			if err == nil || !strings.Contains(err.Error(), p) || !strings.Contains(err.Error(), "not a regular file (a named pipe (FIFO))") {
				t.Errorf("%s: got %v, want a refusal naming the file as a named pipe", name, err)
			}
		case <-time.After(10 * time.Second):
			t.Fatalf("%s: ReadObservations still blocked after 10 s on a named pipe", name)
		}
	}
	if _, _, err := OpenRegular("/dev/null"); err == nil || !strings.Contains(err.Error(), "not a regular file (a device)") {
		t.Errorf("/dev/null: got %v, want a refusal as a device", err)
	}
	if _, _, err := OpenRegular(dir); err == nil || !strings.Contains(err.Error(), "not a regular file (a directory)") {
		t.Errorf("%s: got %v, want a refusal as a directory", dir, err)
	}
}
