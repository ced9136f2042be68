// Package synth writes invented, synthetic wave hindcasts as CF-1.8 NetCDF:
// bulk sea states (Hm0, Te, Tp, direction, depth) on regular, curvilinear and
// point grids, packed or unpacked, and JONSWAP x cos-2s spectra (directional or
// frequency-only) at stations, in any CF calendar, as one file or one file per
// month, classic or NetCDF-4 with deflate. It makes the committed test fixtures
// (Fixtures, cmd/mkfixtures) and the demo (Demo, the fictional Nullport Shelf).
//
// Every file it writes says in its global attributes that it is synthetic
// (synthetic = "yes", comment, caution): the sea states, coastline and depths
// are made up, describe no real place, and are not for any real assessment.
// Output is deterministic: the same Scenario gives the same values (and, with
// the same NetCDF library, the same bytes).
//
// synth writes files only; it must not import ingest, stats or export (it has
// its own small spectrum builder so that the analysis code is checked against
// something it did not write).
package synth
