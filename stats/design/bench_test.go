package design

import "testing"

// BenchmarkFitJoint: the joint model of one cell from a 0.05 m Hm0 histogram
// and a 0.5 m x 1 s occurrence table (the reference sample's).
func BenchmarkFitJoint(b *testing.B) {
	_, h, cells := loadRefs(&testing.T{})
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := FitJoint(h, cells); err != nil {
			b.Fatal(err)
		}
	}
}
