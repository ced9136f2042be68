package ingest

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode"
)

// CSVColumns are the columns of an observation CSV file, in any order (the
// README documents them): time (ISO 8601 / RFC 3339 with a zone, "Z" or an
// offset such as +01:00), station (a name), lon and lat (degrees east and
// north of the station, the same on each of its rows), and at least one of
// hm0_m (m), te_s (s), tp_s (s), dir_deg (degrees, direction the waves come
// from, nautical). Lines starting with # are comments (a file says there
// where its values come from). An empty value, "NaN" or "NA" is missing.
var CSVColumns = []string{"time", "station", "lon", "lat", "hm0_m", "te_s", "tp_s", "dir_deg"}

// Limits of an observation CSV file: a value (time, station name, number)
// and a comment line, in bytes. Longer ones are refused, quoting a short
// prefix (ShortText).
const (
	MaxCSVValue      = 256
	maxCSVCommentLen = 4096
)

var csvRole = map[string]Role{"hm0_m": Hm0, "te_s": Te, "tp_s": Tp, "dir_deg": Dir}

// ReadObservationCSV reads an observation CSV file (CSVColumns). A bad row
// is refused with the file, the line, the column and what to do.
func ReadObservationCSV(path string) ([]*Station, error) {
	fh, _, err := OpenRegular(path)
	if err != nil {
		return nil, fmt.Errorf("ingest: observations: %w", err)
	}
	defer fh.Close()
	r := csv.NewReader(fh)
	r.Comment = '#'
	r.FieldsPerRecord = -1
	r.TrimLeadingSpace = true
	bad := func(line int, col, format string, a ...any) error {
		where := fmt.Sprintf("%s:%d", TermText(path), line)
		if col != "" {
			where += fmt.Sprintf(": column %q", ShortText(col))
		}
		return fmt.Errorf("ingest: %s: %s", where, fmt.Sprintf(format, a...))
	}
	header, err := r.Read()
	if errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("ingest: %s: empty file; an observation CSV starts with the header %s", TermText(path), strings.Join(CSVColumns, ","))
	}
	if err != nil {
		return nil, fmt.Errorf("ingest: %s: %w", TermText(path), err)
	}
	hline, _ := r.FieldPos(0)
	idx := map[string]int{}
	for k, h := range header {
		h = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")))
		known := false
		for _, c := range CSVColumns {
			known = known || c == h
		}
		if !known {
			return nil, bad(hline, h, "not a column swellgrid reads; the columns are %s, with the units in their names: convert the values to these units and rename the column, or leave it out", strings.Join(CSVColumns, ", "))
		}
		if _, dup := idx[h]; dup {
			return nil, bad(hline, h, "appears twice in the header; keep one")
		}
		idx[h] = k
	}
	for _, need := range CSVColumns[:4] {
		if _, ok := idx[need]; !ok {
			return nil, bad(hline, need, "missing from the header; every observation CSV has the columns time, station, lon and lat")
		}
	}
	var roles []Role
	for _, c := range CSVColumns[4:] {
		if _, ok := idx[c]; ok {
			roles = append(roles, csvRole[c])
		}
	}
	if len(roles) == 0 {
		return nil, bad(hline, "", "no measured column; give at least one of hm0_m, te_s, tp_s, dir_deg")
	}
	type row struct {
		t    Stamp
		line int
		v    map[Role]float64
	}
	byStation := map[string][]row{}
	pos := map[string][3]float64{} // lon, lat, first line
	var order []string
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		line, _ := r.FieldPos(0)
		if err != nil {
			return nil, fmt.Errorf("ingest: %s:%d: %w; fix the CSV quoting", TermText(path), line, err)
		}
		if len(rec) != len(header) {
			return nil, bad(line, "", "%d fields, the header has %d; every row needs a value (possibly empty) for each column", len(rec), len(header))
		}
		for k, v := range rec {
			if len(v) > MaxCSVValue {
				return nil, bad(line, header[k], "a value of %d bytes (%q); a value of an observation CSV is at most %d bytes (a station name at most 200): fix the file", len(v), ShortText(v), MaxCSVValue)
			}
		}
		get := func(c string) string { return strings.TrimSpace(rec[idx[c]]) }
		ts := get("time")
		tt, err := parseISOTime(ts)
		if err != nil {
			return nil, bad(line, "time", "%v", err)
		}
		name := get("station")
		if name == "" {
			return nil, bad(line, "station", "empty; give every row its station's name")
		}
		lon, err1 := strconv.ParseFloat(get("lon"), 64)
		lat, err2 := strconv.ParseFloat(get("lat"), 64)
		if err1 != nil || !(lon >= -360 && lon <= 720) {
			return nil, bad(line, "lon", "%q is not a longitude in degrees east", ShortText(get("lon")))
		}
		if err2 != nil || !(lat >= -90 && lat <= 90) {
			return nil, bad(line, "lat", "%q is not a latitude in degrees north (-90..90)", ShortText(get("lat")))
		}
		if p, ok := pos[name]; !ok {
			pos[name] = [3]float64{lon, lat, float64(line)}
			order = append(order, name)
		} else if math.Abs(normLon(p[0])-normLon(lon)) > 1e-6 || math.Abs(p[1]-lat) > 1e-6 {
			return nil, bad(line, "lon", "station %q is at (%v, %v) here but at (%v, %v) on line %d; a station is fixed: give it one position, or another name", ShortText(name), lon, lat, p[0], p[1], int(p[2]))
		}
		vals := map[Role]float64{}
		for _, c := range CSVColumns[4:] {
			k, ok := idx[c]
			if !ok {
				continue
			}
			s := strings.TrimSpace(rec[k])
			x := math.NaN()
			if s != "" && !strings.EqualFold(s, "nan") && !strings.EqualFold(s, "na") {
				x, err = strconv.ParseFloat(s, 64)
				if err != nil || math.IsInf(x, 0) {
					return nil, bad(line, c, "%q is not a number; write the value with a decimal point, or leave it empty when missing", ShortText(s))
				}
				role := csvRole[c]
				switch {
				case role == Dir && !(x >= -360 && x <= 720):
					return nil, bad(line, c, "%v is not a direction in degrees (0..360, the direction the waves come from)", x)
				case role == Dir:
					x = math.Mod(math.Mod(x, 360)+360, 360)
				case !physical(role, x):
					return nil, bad(line, c, "%v is impossible (%s must be %s); fix the value or leave it empty", x, c, physicalRule(role))
				case role == Hm0 && x > 30, (role == Te || role == Tp) && x > 40:
					return nil, bad(line, c, "%v is beyond any measured sea state (Hm0 <= 30 m, periods <= 40 s; common practice): the column's unit may be wrong (%s is in %s)", x, c, map[bool]string{true: "metres", false: "seconds"}[role == Hm0])
				}
			}
			vals[csvRole[c]] = x
		}
		byStation[name] = append(byStation[name], row{StampOf(Standard, tt), line, vals})
	}
	if len(order) == 0 {
		return nil, fmt.Errorf("ingest: %s: no data rows after the header", TermText(path))
	}
	var out []*Station
	for _, name := range order {
		rows := byStation[name]
		sort.SliceStable(rows, func(i, j int) bool { return rows[i].t < rows[j].t })
		st := &Station{Name: name, Lon: normLon(pos[name][0]), Lat: pos[name][1], Calendar: Standard, Values: map[Role][]float64{}, Units: map[Role]string{},
			Source: path, Format: "csv", Attrs: map[string]string{}}
		for _, r := range roles {
			st.Values[r] = make([]float64, 0, len(rows))
			st.Units[r] = map[Role]string{Hm0: "m", Te: "s", Tp: "s", Dir: "degree"}[r]
		}
		for i, rw := range rows {
			if i > 0 && rw.t == rows[i-1].t {
				return nil, bad(rw.line, "time", "station %q has the time %s twice (also on line %d); remove the duplicate row", ShortText(name), DateOf(Standard, rw.t), rows[i-1].line)
			}
			st.Times = append(st.Times, rw.t)
			for _, r := range roles {
				st.Values[r] = append(st.Values[r], rw.v[r])
			}
		}
		out = append(out, st)
	}
	if err := readCSVComments(path, out); err != nil {
		return nil, err
	}
	return out, nil
}

// parseISOTime reads an ISO 8601 time with a zone (RFC 3339: "2031-01-01T00:00:00Z",
// "2031-01-01T01:00:00+01:00"; a space may stand for the T, seconds may be
// left out) and returns it as a UTC date of the standard calendar.
func parseISOTime(s string) (Date, error) {
	layouts := []string{time.RFC3339Nano, "2006-01-02 15:04:05Z07:00", "2006-01-02T15:04Z07:00", "2006-01-02 15:04Z07:00"}
	for _, l := range layouts {
		if t, err := time.Parse(l, s); err == nil {
			t = t.UTC()
			if t.Nanosecond() != 0 {
				return Date{}, fmt.Errorf("time %q has a fraction of a second; give whole seconds", ShortText(s))
			}
			return Date{t.Year(), int(t.Month()), t.Day(), t.Hour(), t.Minute(), t.Second()}, nil
		}
	}
	for _, l := range []string{"2006-01-02T15:04:05", "2006-01-02 15:04:05", "2006-01-02T15:04", "2006-01-02 15:04", "2006-01-02"} {
		if _, err := time.Parse(l, s); err == nil {
			return Date{}, fmt.Errorf("time %q has no zone; write it in ISO 8601 with a zone, e.g. %sZ for UTC or with an offset such as +01:00", ShortText(s), ShortText(strings.Replace(s, " ", "T", 1)))
		}
	}
	return Date{}, fmt.Errorf("%q is not an ISO 8601 time with a zone (e.g. 2031-01-01T00:00:00Z)", ShortText(s))
}

// readCSVComments keeps the file's leading "# key: value" comment lines as
// the stations' attributes (e.g. "# comment: invented station"); the key is
// one word (attrName). Other comment lines are free text, appended to the
// comment attribute.
func readCSVComments(path string, st []*Station) error {
	fh, _, err := OpenRegular(path)
	if err != nil {
		return fmt.Errorf("ingest: %w", err)
	}
	defer fh.Close()
	// Only the leading comment lines are read, each at most maxCSVCommentLen
	// bytes.
	br := bufio.NewReaderSize(fh, maxCSVCommentLen+2)
	for n := 1; ; n++ {
		raw, err := br.ReadSlice('\n')
		if errors.Is(err, bufio.ErrBufferFull) {
			if len(raw) > 0 && raw[0] == '#' {
				return fmt.Errorf("ingest: %s:%d: a comment line of more than %d bytes (%q); shorten it", TermText(path), n, maxCSVCommentLen, ShortText(string(raw)))
			}
			break
		}
		if err != nil && !errors.Is(err, io.EOF) {
			return fmt.Errorf("ingest: %s: %w", TermText(path), err)
		}
		l := strings.TrimRight(string(raw), "\r\n")
		if !strings.HasPrefix(l, "#") {
			break
		}
		text := strings.TrimSpace(strings.TrimPrefix(l, "#"))
		k, v, ok := strings.Cut(text, ":")
		k = strings.TrimSpace(k)
		if !ok || !attrName(k) {
			// Free text (its colon, if any, is no key's: "(+01:00)"):
			// part of the comment.
			if text == "" {
				continue
			}
			k, v = "comment", text
		}
		k = strings.ToLower(k)
		for _, s := range st {
			if old := s.Attrs[k]; old != "" {
				s.Attrs[k] = old + " " + strings.TrimSpace(v)
			} else {
				s.Attrs[k] = strings.TrimSpace(v)
			}
		}
		if err != nil { // io.EOF after the last line
			break
		}
	}
	return nil
}

// attrName reports whether k can name an attribute of a CSV comment line:
// an ASCII letter, then ASCII letters, digits, '_', '-' or '.' (one word:
// "times (+01" is no key).
func attrName(k string) bool {
	for i, r := range k {
		letter := r < 128 && unicode.IsLetter(r)
		if !letter && (i == 0 || !(r < 128 && unicode.IsDigit(r)) && r != '_' && r != '-' && r != '.') {
			return false
		}
	}
	return k != ""
}
