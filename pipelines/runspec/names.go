package runspec

import (
	"fmt"

	atlasreport "swellgrid/export/report"
	"swellgrid/ingest"
)

// Limits of names that become file names.
const (
	maxFileName = 255 // bytes of a file name on the usual file systems (ext4, XFS, NTFS, APFS: common practice)
	maxNameLen  = 200 // bytes of a site or station name
	// MaxStations is the most stations one validation compares: each gets a
	// page with three figures (the work is linear in their number; the
	// limit keeps a file of invented stations from running for hours).
	MaxStations = 1000
)

// CheckFileNames checks names that become parts of file names (the report's
// site pages, the validation pages of stations) before anything is
// computed or written: each at most maxNameLen bytes and its file names at
// most maxFileName bytes with the prefix and suffix (overhead), with at
// least one letter or digit, and no two with the same slug (they would
// share a page, one silently replacing the other). what names the list
// ("site", "station"), key(i) the i-th entry for the message. Messages
// quote at most a short prefix of a name, escaped for the terminal.
func CheckFileNames(what string, names []string, key func(i int) string, overhead int) error {
	seen := make(map[string]int, len(names))
	for i, n := range names {
		q := ingest.ShortText(n)
		if len(n) > maxNameLen {
			return fmt.Errorf("%s: %s name %q is %d bytes; at most %d are allowed (it becomes part of file names, at most %d bytes with their prefix and suffix): shorten it",
				key(i), what, q, len(n), maxNameLen, maxFileName)
		}
		sl := atlasreport.Slug(n)
		if sl == "" {
			return fmt.Errorf("%s: %s name %q has no letter or digit; its pages need a file name: give it one", key(i), what, q)
		}
		if l := len(sl) + overhead; l > maxFileName {
			return fmt.Errorf("%s: %s name %q makes file names of %d bytes; at most %d are allowed: shorten it", key(i), what, q, l, maxFileName)
		}
		if j, ok := seen[sl]; ok {
			return fmt.Errorf("%s: %s name %q has the file name %q of %s (%q): names that differ only in case or punctuation would share a page; rename one",
				key(i), what, q, sl, key(j), ingest.ShortText(names[j]))
		}
		seen[sl] = i
	}
	return nil
}
