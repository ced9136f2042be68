// Package examples holds the example run specs (*.toml, read by the README
// and the tests) and the demo's invented inputs: a power matrix and two
// constraint layers, embedded for `swellgrid demo`. It holds no code beyond
// the embedding and must not know how they are used.
package examples

import _ "embed"

// DemoDeviceCSV is the demo's invented power matrix (demo_device.csv).
//
//go:embed demo_device.csv
var DemoDeviceCSV []byte

// The demo's invented constraint layers: a reserve with an open corridor
// (a hole) and a shipping lane, and two points (a harbour, a grid
// connection); every feature says it is invented.
var (
	//go:embed demo_reserve.geojson
	DemoReserve []byte
	//go:embed demo_ports.geojson
	DemoPorts []byte
)
