package synth

import (
	"fmt"
	"strconv"
	"strings"
)

// Calendar is a CF calendar name (CF Conventions 1.8, section 4.4.1).
type Calendar string

// The calendars the generator can write.
const (
	Standard           Calendar = "standard"
	ProlepticGregorian Calendar = "proleptic_gregorian"
	NoLeap             Calendar = "noleap"
	Day360             Calendar = "360_day"
	AllLeap            Calendar = "all_leap"
	Julian             Calendar = "julian"
)

// Date is a calendar date and hour in a given CF calendar. Month and Day start at 1.
type Date struct {
	Year, Month, Day, Hour int
}

func (d Date) String() string {
	return fmt.Sprintf("%04d-%02d-%02d %02d:00:00", d.Year, d.Month, d.Day, d.Hour)
}

func (c Calendar) valid() bool {
	switch c {
	case Standard, ProlepticGregorian, NoLeap, Day360, AllLeap, Julian:
		return true
	}
	return false
}

// isLeap reports whether year y has a 29 February in calendar c.
// Rules from CF Conventions 1.8 section 4.4.1: Gregorian (every 4th year, not
// centuries unless divisible by 400), Julian (every 4th year), noleap (never),
// all_leap (always); 360_day has no 29 February concept (all months 30 days).
func (c Calendar) isLeap(y int) bool {
	switch c {
	case NoLeap, Day360:
		return false
	case AllLeap:
		return true
	case Julian:
		return y%4 == 0
	default: // standard (after 1582-10-15) and proleptic_gregorian
		return (y%4 == 0 && y%100 != 0) || y%400 == 0
	}
}

// daysInMonth gives the length of month m (1..12) of year y in calendar c.
func (c Calendar) daysInMonth(y, m int) int {
	if c == Day360 {
		return 30
	}
	switch m {
	case 4, 6, 9, 11:
		return 30
	case 2:
		if c.isLeap(y) {
			return 29
		}
		return 28
	}
	return 31
}

// daysInYear gives the length of year y in calendar c.
func (c Calendar) daysInYear(y int) int {
	n := 0
	for m := 1; m <= 12; m++ {
		n += c.daysInMonth(y, m)
	}
	return n
}

// dayOfYear is the zero-based day index of d within its year.
func (c Calendar) dayOfYear(d Date) int {
	n := d.Day - 1
	for m := 1; m < d.Month; m++ {
		n += c.daysInMonth(d.Year, m)
	}
	return n
}

// daysBetween counts days from a to b (b later gives a positive count) in calendar c.
func (c Calendar) daysBetween(a, b Date) int {
	sign := 1
	if b.Year < a.Year {
		a, b = b, a
		sign = -1
	}
	n := 0
	for y := a.Year; y < b.Year; y++ {
		n += c.daysInYear(y)
	}
	return sign * (n + c.dayOfYear(b) - c.dayOfYear(a))
}

// addMonths returns the first day (hour 0) of the month k months after d's month.
func addMonths(d Date, k int) Date {
	m := d.Month - 1 + k
	y := d.Year + m/12
	m %= 12
	if m < 0 {
		m += 12
		y--
	}
	return Date{Year: y, Month: m + 1, Day: 1}
}

// timeUnits is a parsed CF time unit string "<unit> since <date>".
type timeUnits struct {
	hoursPerUnit float64
	epoch        Date
}

// parseTimeUnits reads "hours since 2001-01-01 00:00:00" (units seconds,
// minutes, hours or days; the reference time must be a whole hour).
func parseTimeUnits(s string) (timeUnits, error) {
	var tu timeUnits
	f := strings.Fields(s)
	if len(f) < 3 || f[1] != "since" {
		return tu, fmt.Errorf("synth: time units %q: want \"<unit> since YYYY-MM-DD[ hh:mm:ss]\"", s)
	}
	switch strings.TrimSuffix(f[0], "s") {
	case "second":
		tu.hoursPerUnit = 1.0 / 3600
	case "minute":
		tu.hoursPerUnit = 1.0 / 60
	case "hour":
		tu.hoursPerUnit = 1
	case "day":
		tu.hoursPerUnit = 24
	default:
		return tu, fmt.Errorf("synth: time units %q: unit %q not one of seconds, minutes, hours, days", s, f[0])
	}
	ymd := strings.Split(f[2], "-")
	if len(ymd) != 3 {
		return tu, fmt.Errorf("synth: time units %q: reference date %q is not YYYY-MM-DD", s, f[2])
	}
	var v [3]int
	for i, p := range ymd {
		n, err := strconv.Atoi(p)
		if err != nil {
			return tu, fmt.Errorf("synth: time units %q: reference date %q is not YYYY-MM-DD", s, f[2])
		}
		v[i] = n
	}
	tu.epoch = Date{Year: v[0], Month: v[1], Day: v[2]}
	if len(f) >= 4 {
		hms := strings.Split(f[3], ":")
		h, err := strconv.Atoi(hms[0])
		if err != nil || h < 0 || h > 23 {
			return tu, fmt.Errorf("synth: time units %q: reference time %q is not hh:mm:ss", s, f[3])
		}
		for _, r := range hms[1:] {
			if n, err := strconv.Atoi(r); err != nil || n != 0 {
				return tu, fmt.Errorf("synth: time units %q: reference time must be a whole hour", s)
			}
		}
		tu.epoch.Hour = h
	}
	return tu, nil
}

// value converts a date to a number in these units under calendar c.
func (tu timeUnits) value(c Calendar, d Date) float64 {
	h := float64(c.daysBetween(tu.epoch, d))*24 + float64(d.Hour-tu.epoch.Hour)
	return h / tu.hoursPerUnit
}
