package report

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/palette"
)

// Viridis is the viridis colour map (van der Walt and Smith 2015; designed to
// be perceptually uniform in CAM02-UCS and readable with the common forms of
// colour-vision deficiency), scaled to [Min, Max]. A value maps to entry
// floor((v - Min) / (Max - Min) * 256) of the 256-entry table, clamped to
// 0..255, as matplotlib's ListedColormap does; channels are the table's
// values times 255, truncated (matplotlib's bytes=True).
type Viridis struct {
	min, max, alpha float64
}

// NewViridis returns viridis on [min, max].
func NewViridis(min, max float64) *Viridis { return &Viridis{min: min, max: max, alpha: 1} }

var _ palette.ColorMap = (*Viridis)(nil)

// Index is the table entry of v.
func (v *Viridis) Index(x float64) int {
	if v.max == v.min {
		return 128
	}
	i := int(math.Floor((x - v.min) / (v.max - v.min) * 256))
	return min(max(i, 0), 255)
}

// At returns the colour of x; values outside [Min, Max] are an error, as the
// palette.ColorMap interface asks.
func (v *Viridis) At(x float64) (color.Color, error) {
	if math.IsNaN(x) {
		return nil, fmt.Errorf("report: colour of NaN")
	}
	if x < v.min-1e-12*math.Abs(v.min) || x > v.max+1e-12*math.Abs(v.max) {
		return nil, palette.ErrOverflow
	}
	return v.color(v.Index(x)), nil
}

func (v *Viridis) color(i int) color.NRGBA {
	c := viridisRGB[i]
	return color.NRGBA{uint8(c[0] * 255), uint8(c[1] * 255), uint8(c[2] * 255), uint8(v.alpha * 255)}
}

func (v *Viridis) Max() float64       { return v.max }
func (v *Viridis) Min() float64       { return v.min }
func (v *Viridis) SetMax(x float64)   { v.max = x }
func (v *Viridis) SetMin(x float64)   { v.min = x }
func (v *Viridis) Alpha() float64     { return v.alpha }
func (v *Viridis) SetAlpha(a float64) { v.alpha = a }
func (v *Viridis) Palette(n int) palette.Palette {
	cs := make([]color.Color, n)
	for k := range cs {
		x := v.min
		if n > 1 {
			x = v.min + (v.max-v.min)*float64(k)/float64(n-1)
		}
		cs[k] = v.color(v.Index(x))
	}
	return pal(cs)
}

type pal []color.Color

func (p pal) Colors() []color.Color { return p }
