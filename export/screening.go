package export

import (
	"fmt"
	"io"
	"path/filepath"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"

	"swellgrid/export/contract"
	"swellgrid/grid"
)

// WriteScreeningOutline writes runDir/contours/screening_<scenario>.geojson:
// an RFC 7946 FeatureCollection of one MultiPolygon feature (the passing
// area of a screening scenario: right-hand-rule rings in lon/lat, given in
// the grid's continuous frame and cut at the antimeridian here as RFC 7946
// section 3.1.9 asks, grid.CutPolygons) with the properties given, and the
// foreign members "name" and "caution", atomically.
func WriteScreeningOutline(runDir, scenario string, mp orb.MultiPolygon, props map[string]any) error {
	if !layerName.MatchString(scenario) {
		return fmt.Errorf("export: screening scenario name %q must be lower-case letters, digits and _ (it names the file)", scenario)
	}
	mp = grid.CutPolygons(mp)
	fc := newCollection(contract.ScreeningOutlinePrefix + scenario)
	ft := geojson.NewFeature(mp)
	ft.Properties = geojson.Properties(props)
	fc.Append(ft)
	data, err := encodeCollection(fc)
	if err != nil {
		return fmt.Errorf("export: screening outline %s: %w", scenario, err)
	}
	dir, err := MakeDir(runDir, ContourDir)
	if err != nil {
		return err
	}
	return WriteFileAtomic(filepath.Join(dir, contract.ScreeningOutlineFile(scenario)), func(w io.Writer) error {
		_, err := w.Write(data)
		return err
	})
}
