package synth

import "testing"

// BenchmarkDemoWrite measures writing the whole demo (3 years, bulk grid and
// spectra, one file per month).
func BenchmarkDemoWrite(b *testing.B) {
	d := Demo()
	for i := 0; i < b.N; i++ {
		dir := b.TempDir()
		paths, err := d.Write(dir)
		if err != nil {
			b.Fatal(err)
		}
		if len(paths) != 72 {
			b.Fatalf("demo wrote %d files, want 72 (36 bulk + 36 spectral)", len(paths))
		}
	}
}
