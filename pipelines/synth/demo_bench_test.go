package synth

import "testing"

// BenchmarkDemoWrite measures writing the whole demo (30 years of bulk grid,
// 3 years of spectra, one file per month).
func BenchmarkDemoWrite(b *testing.B) {
	for i := 0; i < b.N; i++ {
		dir := b.TempDir()
		n := 0
		for _, d := range []Scenario{Demo(), DemoSpectra()} {
			paths, err := d.Write(dir)
			if err != nil {
				b.Fatal(err)
			}
			n += len(paths)
		}
		if n != 396 {
			b.Fatalf("demo wrote %d files, want 396 (360 bulk + 36 spectral)", n)
		}
	}
}
