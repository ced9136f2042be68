package export

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"regexp"

	"github.com/paulmach/orb"
	"github.com/paulmach/orb/geojson"

	"swellgrid/export/contract"
	"swellgrid/grid"
)

// ContourDir is the sub-directory of a run directory holding contour layers.
const ContourDir = contract.ContourDir

var layerName = regexp.MustCompile(`^[a-z][a-z0-9_]*$`)

// WriteContours writes the contour layers of one column into runDir/contours/
// (created if needed), as RFC 7946 GeoJSON FeatureCollections:
//
//   - <column>.geojson: one MultiLineString feature per level, properties
//     "level", "column", "units";
//   - <column>.bands.geojson: one MultiPolygon feature per band
//     [edges[b], edges[b+1]), properties "lower", "upper" (null when the edge
//     is infinite, i.e. the band is open-ended), "column", "units".
//
// Geometries come in the region's continuous longitude frame (grid.Isolines
// and grid.Bands give lon/lat with right-hand-rule rings, 0..360 for a region
// across 180 degrees) and are cut at the antimeridian here, as RFC 7946
// section 3.1.9 asks (grid.CutLines, grid.CutPolygons): longitudes in
// [-180, 180], no segment longer than 180 degrees. Each collection also carries the
// foreign members "name" (the layer name) and "caution" (ScreeningCaution).
// A layer is skipped when its levels (or edges) and geometries are both empty.
// Both files are encoded before either is written, and each is written
// atomically; if the second cannot be written, a first file that did not exist
// before is removed again.
func WriteContours(runDir, column, units string, levels []float64, lines []orb.MultiLineString,
	edges []float64, bands []orb.MultiPolygon) error {
	if !layerName.MatchString(column) {
		return fmt.Errorf("export: contour column name %q must be lower-case letters, digits and _ (it names the file)", column)
	}
	type layer struct {
		path string
		data []byte
	}
	var layers []layer
	dir := filepath.Join(runDir, ContourDir)
	if len(levels) > 0 || len(lines) > 0 {
		if len(lines) != len(levels) {
			return fmt.Errorf("export: contours of %s: %d levels but %d isolines", column, len(levels), len(lines))
		}
		fc := newCollection(column)
		for k, l := range levels {
			if math.IsNaN(l) || math.IsInf(l, 0) {
				return fmt.Errorf("export: contours of %s: level %d is %v", column, k, l)
			}
			g := grid.CutLines(lines[k])
			ft := geojson.NewFeature(g)
			ft.Properties = geojson.Properties{"level": l, "column": column, "units": units}
			fc.Append(ft)
		}
		data, err := encodeCollection(fc)
		if err != nil {
			return fmt.Errorf("export: contours of %s: %w", column, err)
		}
		layers = append(layers, layer{filepath.Join(dir, contract.ContourLinesFile(column)), data})
	}
	if len(edges) > 0 || len(bands) > 0 {
		if len(edges) < 2 || len(bands) != len(edges)-1 {
			return fmt.Errorf("export: bands of %s: %d edges need %d bands, got %d", column, len(edges), max(len(edges)-1, 0), len(bands))
		}
		fc := newCollection(column + ".bands")
		for k := range bands {
			g := grid.CutPolygons(bands[k])
			ft := geojson.NewFeature(g)
			ft.Properties = geojson.Properties{"lower": finiteOrNil(edges[k]), "upper": finiteOrNil(edges[k+1]), "column": column, "units": units}
			fc.Append(ft)
		}
		data, err := encodeCollection(fc)
		if err != nil {
			return fmt.Errorf("export: bands of %s: %w", column, err)
		}
		layers = append(layers, layer{filepath.Join(dir, contract.ContourBandsFile(column)), data})
	}
	if len(layers) == 0 {
		return nil
	}
	if _, err := MakeDir(runDir, ContourDir); err != nil {
		return err
	}
	var created []string
	for _, l := range layers {
		_, statErr := os.Stat(l.path)
		isNew := errors.Is(statErr, os.ErrNotExist)
		err := WriteFileAtomic(l.path, func(w io.Writer) error {
			_, err := w.Write(l.data)
			return err
		})
		if err != nil {
			for _, p := range created {
				os.Remove(p)
			}
			return err
		}
		if isNew {
			created = append(created, l.path)
		}
	}
	return nil
}

func newCollection(name string) *geojson.FeatureCollection {
	fc := geojson.NewFeatureCollection()
	fc.ExtraMembers = geojson.Properties{"name": name, "caution": ScreeningCaution}
	return fc
}

func finiteOrNil(v float64) any {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return v
}

func encodeCollection(fc *geojson.FeatureCollection) ([]byte, error) {
	data, err := json.Marshal(fc)
	if err != nil {
		return nil, err
	}
	var out bytes.Buffer
	out.Write(data)
	out.WriteByte('\n')
	return out.Bytes(), nil
}
