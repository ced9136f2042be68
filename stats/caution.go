package stats

// Caution is the one caution text of swellgrid. It goes, word for word, into
// every table's metadata (key swellgrid:caution), every contour layer, the
// manifest, the command help and the README (checked by tests in pipelines
// and cmd/swellgrid). Other packages refer to it; none keeps a text of its own.
const Caution = "Resource figures, P50/P90/P99 energies and extreme sea states from swellgrid are screening estimates " +
	"from a model hindcast, not design values. Return levels come from a statistical model fitted " +
	"to a modelled record, with uncertainty that grows quickly beyond the record length. " +
	"Design loads, survival conditions, site selection and consenting decisions follow the " +
	"applicable design standards and local codes, site measurements, and review by qualified engineers."
