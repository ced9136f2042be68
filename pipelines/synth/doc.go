// Package synth writes invented, synthetic wave hindcasts as CF NetCDF: bulk and
// spectral variants on regular, curvilinear and point grids, packed or unpacked,
// in several calendars. It makes the committed test fixtures and the demo.
// Every file it writes says in its global attributes that it is synthetic.
//
// synth writes files only; it must not import ingest, stats or export.
package synth
