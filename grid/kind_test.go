package grid

import (
	"encoding/json"
	"testing"
)

// A grid kind is written in JSON as the string the manifest has always held:
// the run engine wrote ManifestGrid.Kind = Kind.String() as a JSON string
// (pipelines/outputs.go at 21d33b4), so the text encoding must give those
// same bytes for every kind, and read them back.
func TestKindText(t *testing.T) {
	for _, c := range []struct {
		k    Kind
		name string // as in the manifests written before Kind had a text form
	}{{Regular, "regular"}, {Curvilinear, "curvilinear"}, {Points, "points"}, {MeshKind, "mesh"}} {
		got, err := json.Marshal(struct {
			K Kind `json:"kind"`
		}{c.k})
		if err != nil {
			t.Fatalf("%v: %v", c.name, err)
		}
		old, _ := json.Marshal(struct {
			K string `json:"kind"`
		}{c.k.String()})
		if want := `{"kind":"` + c.name + `"}`; string(got) != want || string(old) != want {
			t.Errorf("kind %d: JSON %s, the string form gives %s, want %s", int(c.k), got, old, want)
		}
		var back struct {
			K Kind `json:"kind"`
		}
		back.K = Kind(-1)
		if err := json.Unmarshal(got, &back); err != nil || back.K != c.k {
			t.Errorf("%s read back as %v (%v), want %v", got, back.K, err, c.k)
		}
		if k, err := ParseKind(c.name); err != nil || k != c.k {
			t.Errorf("ParseKind(%q) = %v, %v", c.name, k, err)
		}
	}
	for _, bad := range []string{"", "unknown", "Regular", "mesh "} {
		if k, err := ParseKind(bad); err == nil {
			t.Errorf("ParseKind(%q) = %v, want an error", bad, k)
		}
	}
	var k Kind
	if err := json.Unmarshal([]byte(`"hexagonal"`), &k); err == nil {
		t.Errorf(`"hexagonal" read as %v, want an error`, k)
	}
	if b, err := json.Marshal(Kind(7)); err == nil {
		t.Errorf("Kind(7) written as %s, want an error", b)
	}
}
