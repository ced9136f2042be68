// Package extremes estimates extreme sea states for one grid cell: it collects,
// while the hindcast is streamed one time step at a time, the annual (block)
// maxima of Hm0 and the declustered storm peaks, each with the Te and Tp of its
// time step; it fits a generalised extreme value (GEV) distribution to the annual
// maxima and a generalised Pareto distribution (GPD) to the storm peaks above a
// threshold, both by maximum likelihood with gonum's optimiser; and it reports
// return levels with 95% confidence intervals (profile likelihood by default,
// the delta method beside it, optionally a seeded parametric bootstrap), the
// associated Te/Tp, and quality flags. One publication policy (Publication)
// decides, for the GEV and the GPD alike, which return levels are published;
// the others are NaN with the reason in their flags.
//
// The package works on plain numbers. It must not know about NetCDF, files,
// grids, tables or the pipeline: the caller feeds values (Collector.Add), merges
// partial states (Collector.Merge), stores them (MarshalBinary) and asks for a
// Result (Analyse). It never writes output itself.
//
// The shape parameter follows Coles (2001), An Introduction to Statistical
// Modeling of Extreme Values, Springer: Shape > 0 is a heavy upper tail,
// Shape < 0 a bounded one, Shape = 0 the Gumbel (GEV) or exponential (GPD) limit,
// which every formula here handles smoothly. (scipy's genextreme uses c = -Shape.)
//
// Return levels are screening estimates from a statistical model of a modelled
// record; see Caution.
package extremes

import "swellgrid/stats"

// Caution is the text that every output carrying return levels must carry.
const Caution = stats.Caution // the one caution text; see stats.Caution
