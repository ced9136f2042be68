package bench

import (
	"fmt"
	"path/filepath"
	"regexp"
	"slices"
)

// monthFile is a monthly file name of the synthetic scenarios
// (NAME_YYYY-MM.nc); its year's glob is NAME_YYYY-*.nc.
var monthFile = regexp.MustCompile(`^(.*_[0-9]{4})-[0-9]{2}\.nc$`)

// specPaths is what a case gives the spec's input.paths for its files:
// one glob per year where the glob matches exactly the year's listed
// files, else the files themselves, in their order. The spec allows at
// most 64 entries (the README's list limit), and a 10-year monthly record
// has 120 files.
func specPaths(files []string) ([]string, error) {
	var out []string
	for i := 0; i < len(files); {
		m := monthFile.FindStringSubmatch(filepath.Base(files[i]))
		if m == nil {
			out, i = append(out, files[i]), i+1
			continue
		}
		glob := filepath.Join(filepath.Dir(files[i]), m[1]+"-*.nc")
		matches, err := filepath.Glob(glob)
		if err != nil {
			return nil, err
		}
		j := i + len(matches)
		if len(matches) > 0 && j <= len(files) && slices.Equal(matches, files[i:j]) {
			out, i = append(out, glob), j
			continue
		}
		out, i = append(out, files[i]), i+1
	}
	if len(out) > 64 {
		return nil, fmt.Errorf("bench: %d files make %d input.paths entries, more than the 64 a spec allows", len(files), len(out))
	}
	return out, nil
}
