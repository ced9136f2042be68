package climate

import "testing"

func TestStateBytesPrinted(t *testing.T) {
	cfg := DefaultConfig()
	if err := cfg.Validate(); err != nil {
		t.Fatal(err)
	}
	t.Logf("default state: %d B fixed, %d B per year", cfg.StateBytes(0), cfg.StateBytes(1)-cfg.StateBytes(0))
}
