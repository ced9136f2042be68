package climate

import "fmt"

// calendar is one of the CF calendars, reduced to what coverage needs: the
// number of days in a month of a year.
type calendar int

const (
	calGregorian calendar = iota // standard, gregorian, proleptic_gregorian
	calJulian
	calNoLeap
	calAllLeap
	cal360
)

func parseCalendar(name string) (calendar, error) {
	switch name {
	case "standard", "gregorian", "proleptic_gregorian", "":
		return calGregorian, nil
	case "julian":
		return calJulian, nil
	case "noleap", "365_day":
		return calNoLeap, nil
	case "all_leap", "366_day":
		return calAllLeap, nil
	case "360_day":
		return cal360, nil
	}
	return 0, fmt.Errorf("climate config: Calendar %q is not a CF calendar this package knows "+
		"(use standard, gregorian, proleptic_gregorian, julian, noleap, 365_day, all_leap, 366_day or 360_day)", name)
}

var monthDays = [12]int{31, 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31}

// daysInMonth returns the length in days of month m (1..12) of year y in the
// calendar, by the CF conventions (section 4.4.1, "Calendar"): Gregorian leap
// years are divisible by 4 except centuries not divisible by 400 (the mixed
// Julian/Gregorian "standard" calendar is taken as Gregorian: hindcasts start
// long after 1582); Julian leap years are divisible by 4; noleap has no leap
// years, all_leap only leap years; 360_day has twelve 30-day months.
func (c calendar) daysInMonth(y, m int) int {
	if c == cal360 {
		return 30
	}
	d := monthDays[m-1]
	if m != 2 {
		return d
	}
	leap := false
	switch c {
	case calGregorian:
		leap = y%4 == 0 && (y%100 != 0 || y%400 == 0)
	case calJulian:
		leap = y%4 == 0
	case calAllLeap:
		leap = true
	}
	if leap {
		return 29
	}
	return 28
}
