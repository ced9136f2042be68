package ingest

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Calendar is a CF calendar (CF Conventions 1.8, section 4.4.1).
type Calendar string

// The calendars CF defines; aliases are folded to these by ParseCalendar.
const (
	Standard           Calendar = "standard" // mixed Julian/Gregorian, switch at 1582-10-15
	ProlepticGregorian Calendar = "proleptic_gregorian"
	NoLeap             Calendar = "noleap"
	AllLeap            Calendar = "all_leap"
	Day360             Calendar = "360_day"
	Julian             Calendar = "julian"
)

// ParseCalendar folds a CF calendar attribute (case-insensitive, with the CF
// aliases gregorian, 365_day, 366_day; empty means standard) to a Calendar.
func ParseCalendar(s string) (Calendar, error) {
	switch strings.ToLower(strings.TrimSpace(s)) {
	case "", "standard", "gregorian":
		return Standard, nil
	case "proleptic_gregorian":
		return ProlepticGregorian, nil
	case "noleap", "365_day":
		return NoLeap, nil
	case "all_leap", "366_day":
		return AllLeap, nil
	case "360_day":
		return Day360, nil
	case "julian":
		return Julian, nil
	}
	return "", fmt.Errorf("unknown calendar %q (CF calendars: standard, gregorian, proleptic_gregorian, noleap, 365_day, all_leap, 366_day, 360_day, julian); set the calendar attribute of the time variable", s)
}

// Date is a calendar date and time of day in some Calendar.
type Date struct {
	Year, Month, Day     int
	Hour, Minute, Second int
}

func (d Date) String() string {
	return fmt.Sprintf("%04d-%02d-%02d %02d:%02d:%02d", d.Year, d.Month, d.Day, d.Hour, d.Minute, d.Second)
}

// Stamp is a time as whole seconds since the start of day 0 of a calendar's
// own day count (see dayNumber). Stamps of one calendar are totally ordered and
// their differences are elapsed seconds in that calendar.
type Stamp int64

// Hours is the stamp as hours on the calendar's continuous axis.
func (s Stamp) Hours() float64 { return float64(s) / 3600 }

var cumDays = [2][13]int{
	{0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334, 365},
	{0, 31, 60, 91, 121, 152, 182, 213, 244, 274, 305, 335, 366},
}

func isLeapGregorian(y int) bool { return y%4 == 0 && (y%100 != 0 || y%400 == 0) }
func isLeapJulian(y int) bool    { return y%4 == 0 }

func floorDiv(a, b int64) int64 {
	q := a / b
	if (a%b != 0) && ((a < 0) != (b < 0)) {
		q--
	}
	return q
}

// gregorianDays returns the day number of a proleptic Gregorian date, counted
// as the Julian Day Number (days since -4713-11-24 noon, integer part at noon).
// Algorithm: the standard civil-from-days arithmetic (H. Hinnant,
// "chrono-Compatible Low-Level Date Algorithms"), shifted to the JDN epoch
// (1970-01-01 is JDN 2440588).
func gregorianDays(y, m, d int) int64 {
	yy := int64(y)
	if m <= 2 {
		yy--
	}
	era := floorDiv(yy, 400)
	yoe := yy - era*400
	mp := int64((m + 9) % 12)
	doy := (153*mp+2)/5 + int64(d) - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	return era*146097 + doe - 719468 + 2440588
}

func gregorianFromDays(jdn int64) (int, int, int) {
	z := jdn - 2440588 + 719468
	era := floorDiv(z, 146097)
	doe := z - era*146097
	yoe := (doe - doe/1460 + doe/36524 - doe/146096) / 365
	y := yoe + era*400
	doy := doe - (365*yoe + yoe/4 - yoe/100)
	mp := (5*doy + 2) / 153
	d := doy - (153*mp+2)/5 + 1
	m := mp + 3
	if m > 12 {
		m -= 12
	}
	if m <= 2 {
		y++
	}
	return int(y), int(m), int(d)
}

// julianDays returns the Julian Day Number of a date in the Julian calendar
// (E. G. Richards, "Calendars", in Explanatory Supplement to the Astronomical
// Almanac, 3rd ed., 2013, section 15.11, algorithm 3, with the Gregorian
// correction omitted).
func julianDays(y, m, d int) int64 {
	a := floorDiv(int64(14-m), 12)
	yy := int64(y) + 4800 - a
	mm := int64(m) + 12*a - 3
	return int64(d) + (153*mm+2)/5 + 365*yy + floorDiv(yy, 4) - 32083
}

func julianFromDays(jdn int64) (int, int, int) {
	c := jdn + 32082
	dd := floorDiv(4*c+3, 1461)
	e := c - floorDiv(1461*dd, 4)
	mm := (5*e + 2) / 153
	day := e - (153*mm+2)/5 + 1
	month := mm + 3 - 12*(mm/10)
	year := dd - 4800 + mm/10
	return int(year), int(month), int(day)
}

// gregorianSwitchJDN is 1582-10-15 (Gregorian), the first day of the Gregorian
// calendar in CF's "standard" calendar; the day before is 1582-10-04 (Julian).
const gregorianSwitchJDN = 2299161

// dayNumber is the day count of a date in calendar c: the Julian Day Number for
// the real-world calendars, and y*L + day of year for the model calendars with a
// fixed year length L (365, 366, 360).
func dayNumber(c Calendar, y, m, d int) int64 {
	switch c {
	case ProlepticGregorian:
		return gregorianDays(y, m, d)
	case Julian:
		return julianDays(y, m, d)
	case Standard:
		if g := gregorianDays(y, m, d); g >= gregorianSwitchJDN {
			return g
		}
		return julianDays(y, m, d)
	case NoLeap:
		return int64(y)*365 + int64(cumDays[0][m-1]+d-1)
	case AllLeap:
		return int64(y)*366 + int64(cumDays[1][m-1]+d-1)
	case Day360:
		return int64(y)*360 + int64((m-1)*30+d-1)
	}
	panic("ingest: unknown calendar " + string(c))
}

func dateFromDayNumber(c Calendar, n int64) (int, int, int) {
	fixed := func(length int64, leap int) (int, int, int) {
		y := floorDiv(n, length)
		doy := int(n - y*length)
		m := 1
		for m < 12 && doy >= cumDays[leap][m] {
			m++
		}
		return int(y), m, doy - cumDays[leap][m-1] + 1
	}
	switch c {
	case ProlepticGregorian:
		return gregorianFromDays(n)
	case Julian:
		return julianFromDays(n)
	case Standard:
		if n >= gregorianSwitchJDN {
			return gregorianFromDays(n)
		}
		return julianFromDays(n)
	case NoLeap:
		return fixed(365, 0)
	case AllLeap:
		return fixed(366, 1)
	case Day360:
		y := floorDiv(n, 360)
		doy := int(n - y*360)
		return int(y), doy/30 + 1, doy%30 + 1
	}
	panic("ingest: unknown calendar " + string(c))
}

// daysInMonth is the length of month m of year y in calendar c.
func daysInMonth(c Calendar, y, m int) int {
	switch c {
	case Day360:
		return 30
	case NoLeap:
		return cumDays[0][m] - cumDays[0][m-1]
	case AllLeap:
		return cumDays[1][m] - cumDays[1][m-1]
	}
	leap := isLeapGregorian(y)
	if c == Julian || (c == Standard && y < 1582) {
		leap = isLeapJulian(y)
	}
	l := 0
	if leap {
		l = 1
	}
	return cumDays[l][m] - cumDays[l][m-1]
}

// StampOf converts a date to a Stamp in calendar c.
func StampOf(c Calendar, d Date) Stamp {
	return Stamp(dayNumber(c, d.Year, d.Month, d.Day)*86400 + int64(d.Hour*3600+d.Minute*60+d.Second))
}

// DateOf converts a Stamp back to a date in calendar c.
func DateOf(c Calendar, s Stamp) Date {
	day := floorDiv(int64(s), 86400)
	sec := int(int64(s) - day*86400)
	y, m, d := dateFromDayNumber(c, day)
	return Date{y, m, d, sec / 3600, sec / 60 % 60, sec % 60}
}

// TimeUnits is a parsed CF time "units" attribute: "<unit> since <date>".
type TimeUnits struct {
	Seconds  float64 // length of one unit in seconds
	Ref      Stamp   // the reference date, in Calendar
	Calendar Calendar
	Text     string
}

// ParseTimeUnits parses a CF time units string ("hours since 2001-01-01 00:00:00",
// "days since 1990-1-1", "seconds since 2000-01-01T00:00:00Z", with an optional
// UTC offset such as "+01:00") in calendar c (CF Conventions 1.8, section 4.4).
// Months and years are refused: CF discourages them as their length varies.
func ParseTimeUnits(units string, c Calendar) (TimeUnits, error) {
	tu := TimeUnits{Calendar: c, Text: units}
	fields := strings.Fields(strings.TrimSpace(units))
	if len(fields) < 3 || strings.ToLower(fields[1]) != "since" {
		return tu, fmt.Errorf("time units %q are not of the form \"<unit> since <date>\" (e.g. \"hours since 2001-01-01 00:00:00\"); fix the units attribute of the time variable", units)
	}
	switch strings.ToLower(fields[0]) {
	case "second", "seconds", "sec", "secs", "s":
		tu.Seconds = 1
	case "minute", "minutes", "min", "mins":
		tu.Seconds = 60
	case "hour", "hours", "hr", "hrs", "h":
		tu.Seconds = 3600
	case "day", "days", "d":
		tu.Seconds = 86400
	case "month", "months", "year", "years", "yr", "yrs":
		return tu, fmt.Errorf("time units %q use %s, whose length varies; CF advises against them: store time in days, hours, minutes or seconds", units, fields[0])
	default:
		return tu, fmt.Errorf("time units %q: unknown unit %q (use seconds, minutes, hours or days)", units, fields[0])
	}
	rest := strings.Join(fields[2:], " ")
	ref, err := parseRefDate(rest, c)
	if err != nil {
		return tu, fmt.Errorf("time units %q: %v", units, err)
	}
	tu.Ref = ref
	return tu, nil
}

func parseRefDate(s string, c Calendar) (Stamp, error) {
	s = strings.TrimSpace(s)
	s = strings.Replace(s, "T", " ", 1)
	offset := 0
	// Trailing zone: Z, UTC, or +hh[:mm] / -hh[:mm].
	s = strings.TrimSuffix(s, "Z")
	parts := strings.Fields(s)
	if len(parts) > 0 && strings.EqualFold(parts[len(parts)-1], "UTC") {
		parts = parts[:len(parts)-1]
	}
	if len(parts) >= 2 {
		last := parts[len(parts)-1]
		if last[0] == '+' || (last[0] == '-' && len(parts) == 3) {
			o, err := parseOffset(last)
			if err != nil {
				return 0, err
			}
			offset = o
			parts = parts[:len(parts)-1]
		}
	}
	if len(parts) == 0 || len(parts) > 2 {
		return 0, fmt.Errorf("reference date %q not understood (expected YYYY-MM-DD [hh:mm:ss])", s)
	}
	// A time joined to the date with a zone offset, e.g. "00:00:00+01:00".
	if len(parts) == 2 {
		if i := strings.IndexAny(parts[1], "+-"); i > 0 {
			o, err := parseOffset(parts[1][i:])
			if err != nil {
				return 0, err
			}
			offset = o
			parts[1] = parts[1][:i]
		}
	}
	ymd := strings.Split(parts[0], "-")
	neg := false
	if strings.HasPrefix(parts[0], "-") {
		neg = true
		ymd = strings.Split(parts[0][1:], "-")
	}
	if len(ymd) < 1 || len(ymd) > 3 {
		return 0, fmt.Errorf("reference date %q not understood (expected YYYY-MM-DD)", parts[0])
	}
	nums := []int{0, 1, 1}
	for i, p := range ymd {
		v, err := strconv.Atoi(p)
		if err != nil {
			return 0, fmt.Errorf("reference date %q not understood (expected YYYY-MM-DD)", parts[0])
		}
		nums[i] = v
	}
	if neg {
		nums[0] = -nums[0]
	}
	d := Date{Year: nums[0], Month: nums[1], Day: nums[2]}
	if d.Year < MinYear || d.Year > MaxYear {
		return 0, fmt.Errorf("reference date %q: year %d is outside the years %d-%d that swellgrid reads", ShortText(parts[0]), d.Year, MinYear, MaxYear)
	}
	if d.Month < 1 || d.Month > 12 || d.Day < 1 || d.Day > daysInMonth(c, d.Year, d.Month) {
		return 0, fmt.Errorf("reference date %q does not exist in the %s calendar", parts[0], c)
	}
	if c == Standard && d.Year == 1582 && d.Month == 10 && d.Day > 4 && d.Day < 15 {
		return 0, fmt.Errorf("reference date %q falls in the days dropped by the Gregorian reform (1582-10-05 to 1582-10-14)", parts[0])
	}
	var frac float64
	if len(parts) == 2 {
		hms := strings.Split(parts[1], ":")
		if len(hms) > 3 {
			return 0, fmt.Errorf("reference time %q not understood (expected hh:mm:ss)", parts[1])
		}
		mult := []int{3600, 60, 1}
		for i, p := range hms {
			v, err := strconv.ParseFloat(p, 64)
			if err != nil || v < 0 {
				return 0, fmt.Errorf("reference time %q not understood (expected hh:mm:ss)", parts[1])
			}
			frac += v * float64(mult[i])
		}
	}
	st := StampOf(c, d) + Stamp(math.Round(frac)) - Stamp(offset)
	if lo, hi := timeRange(c); st < lo || st >= hi {
		return 0, fmt.Errorf("reference date %q with its time and zone falls outside the years %d-%d that swellgrid reads", ShortText(s), MinYear, MaxYear)
	}
	return st, nil
}

func parseOffset(s string) (int, error) {
	sign := 1
	if s[0] == '-' {
		sign = -1
	}
	body := s[1:]
	var h, m int
	var err error
	if strings.Contains(body, ":") {
		p := strings.SplitN(body, ":", 2)
		h, err = strconv.Atoi(p[0])
		if err == nil {
			m, err = strconv.Atoi(p[1])
		}
	} else {
		h, err = strconv.Atoi(body)
		if len(body) == 4 {
			h, m = h/100, h%100
		}
	}
	if err != nil || h > 14 || m > 59 {
		return 0, fmt.Errorf("time zone offset %q not understood", s)
	}
	return sign * (h*3600 + m*60), nil
}

// Stamp converts one stored time value to a Stamp, rounded to the second.
func (tu TimeUnits) Stamp(v float64) (Stamp, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("time value %v is not finite", v)
	}
	s := v * tu.Seconds
	lo, hi := timeRange(tu.Calendar)
	if st := float64(tu.Ref) + math.Round(s); st < float64(lo) || st >= float64(hi) {
		return 0, fmt.Errorf("time value %v %s falls outside the years %d-%d of the %s calendar; fix the time values or their units", v, tu.Text, MinYear, MaxYear, tu.Calendar)
	}
	return tu.Ref + Stamp(math.Round(s)), nil
}

// MinYear and MaxYear bound the calendar years swellgrid reads: a reference
// date or a time outside them is refused (a time axis that far away is a
// wrong units attribute, and the day arithmetic stays far from overflow).
const (
	MinYear = 1
	MaxYear = 9999
)

// timeRange is the stamps of the start of MinYear and of the year after
// MaxYear in calendar c: a time t is read when lo <= t < hi.
func timeRange(c Calendar) (lo, hi Stamp) {
	return StampOf(c, Date{Year: MinYear, Month: 1, Day: 1}), StampOf(c, Date{Year: MaxYear + 1, Month: 1, Day: 1})
}
