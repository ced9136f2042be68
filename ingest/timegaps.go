package ingest

// checkLongGaps refuses a time axis with a gap longer than all the rest of
// the record together: such a gap is almost always a mistyped reference date
// in one file's time units (a year 9000 for 2001), which would otherwise be
// read as a record of thousands of years with a few months of data (huge
// checkpoints and year tables, and statistics "per year" over empty years).
// The file on the shorter side of the gap is named, with its time units.
// allow accepts the gap (spec key input.allow_long_gaps).
func (c *Catalog) checkLongGaps(allow bool) error {
	if allow || len(c.Files) < 2 || c.Steps < 2 {
		return nil
	}
	span := int64(c.times[c.Steps-1] - c.times[0])
	// p is the file reaching furthest so far: files of different roles may
	// overlap, and static files have no times.
	var p *FileInfo
	for i := range c.Files {
		f := &c.Files[i]
		if f.Static {
			continue
		}
		if p == nil {
			p = f
			continue
		}
		gap := int64(f.First - p.Last)
		if gap <= span-gap {
			if f.Last > p.Last {
				p = f
			}
			continue
		}
		// The suspect is the side of the gap with fewer steps.
		sus := f
		if before := p.Offset + p.Steps; before < c.Steps-before {
			sus = p
		}
		return errf(sus.Path, "", "a gap of %.1f years between %s (last step %s) and %s (first step %s) is longer than the rest of the record; check the time units of %s (%q): a mistyped reference date? Fix the units, or set input.allow_long_gaps = true in the spec if the gap is real",
			float64(gap)/(365.25*86400), p.Path, p.To, f.Path, f.From, sus.Path, sus.timeUnits)
	}
	return nil
}
