package survey

import (
	"fmt"
	"strconv"
	"strings"
	"time"
)

// Grains are the period lengths a time partition may have, finest first.
var Grains = []string{"day", "week", "month", "quarter", "year"}

// precision is how finely a partition key names a time: the finest grain it can fold to.
type precision int

const (
	precDay precision = iota
	precWeek
	precMonth
	precQuarter
	precYear
)

func grainIndex(g string) int {
	for i, n := range Grains {
		if n == g {
			return i
		}
	}
	return -1
}

// period is one period of a grain, numbered so that consecutive periods are consecutive
// integers.
type period struct {
	index int64
	start time.Time // first day, midnight UTC
	end   time.Time // first day of the next period
}

// parseKey reads a partition key as a time: YYYY-MM-DD (a datetime's date part counts),
// YYYY-Www (ISO week), YYYY-MM (or YYYY-M), YYYY-Qn, YYYY. Folder keys of several levels
// (year=2026/month=03) arrive joined with "/", read as "-".
func parseKey(key string) (time.Time, precision, bool) {
	s := strings.ReplaceAll(strings.TrimSpace(key), "/", "-")
	if t, ok := parseDatetime(s); ok {
		return t, precDay, true
	}
	if t, ok := parseYMD(s); ok {
		return t, precDay, true
	}
	parts := strings.Split(s, "-")
	y, err := strconv.Atoi(parts[0])
	if err != nil || len(parts[0]) != 4 || y < 1 {
		return time.Time{}, 0, false
	}
	switch len(parts) {
	case 1:
		return time.Date(y, 1, 1, 0, 0, 0, 0, time.UTC), precYear, true
	case 2:
		p := parts[1]
		switch {
		case len(p) == 2 && (p[0] == 'Q' || p[0] == 'q') && p[1] >= '1' && p[1] <= '4':
			return time.Date(y, time.Month(3*int(p[1]-'1')+1), 1, 0, 0, 0, 0, time.UTC), precQuarter, true
		case len(p) == 3 && (p[0] == 'W' || p[0] == 'w'):
			w, err := strconv.Atoi(p[1:])
			if err != nil || w < 1 || w > 53 {
				return time.Time{}, 0, false
			}
			t := isoWeekStart(y, w)
			if yy, ww := t.ISOWeek(); yy != y || ww != w {
				return time.Time{}, 0, false
			}
			return t, precWeek, true
		}
		m, err := strconv.Atoi(p)
		if err != nil || len(p) > 2 || m < 1 || m > 12 {
			return time.Time{}, 0, false
		}
		return time.Date(y, time.Month(m), 1, 0, 0, 0, 0, time.UTC), precMonth, true
	case 3:
		m, err1 := strconv.Atoi(parts[1])
		d, err2 := strconv.Atoi(parts[2])
		if err1 != nil || err2 != nil || len(parts[1]) > 2 || len(parts[2]) > 2 {
			return time.Time{}, 0, false
		}
		t := time.Date(y, time.Month(m), d, 0, 0, 0, 0, time.UTC)
		if t.Month() != time.Month(m) || t.Day() != d {
			return time.Time{}, 0, false
		}
		return t, precDay, true
	}
	return time.Time{}, 0, false
}

// parseYMD reads exactly YYYY-MM-DD.
func parseYMD(s string) (time.Time, bool) {
	if len(s) != 10 || s[4] != '-' || s[7] != '-' {
		return time.Time{}, false
	}
	t, err := time.Parse("2006-01-02", s)
	return t, err == nil
}

// parseDatetime reads YYYY-MM-DD, T or a space, hh:mm[:ss[.fraction]], an optional Z or
// ±hh:mm; the date is the date as written, whatever the offset.
func parseDatetime(s string) (time.Time, bool) {
	if len(s) < 16 || (s[10] != 'T' && s[10] != ' ') {
		return time.Time{}, false
	}
	d, ok := parseYMD(s[:10])
	if !ok {
		return time.Time{}, false
	}
	rest := s[11:]
	switch {
	case strings.HasSuffix(rest, "Z"):
		rest = rest[:len(rest)-1]
	case len(rest) > 6 && (rest[len(rest)-6] == '+' || rest[len(rest)-6] == '-') && rest[len(rest)-3] == ':':
		if _, err := time.Parse("15:04", rest[len(rest)-5:]); err != nil {
			return time.Time{}, false
		}
		rest = rest[:len(rest)-6]
	}
	for _, layout := range []string{"15:04", "15:04:05", "15:04:05.999999999"} {
		if _, err := time.Parse(layout, rest); err == nil {
			return d, true
		}
	}
	return time.Time{}, false
}

func isoWeekStart(year, week int) time.Time {
	// 4 January is always in ISO week 1 (ISO 8601).
	jan4 := time.Date(year, 1, 4, 0, 0, 0, 0, time.UTC)
	monday := jan4.AddDate(0, 0, -((int(jan4.Weekday()) + 6) % 7))
	return monday.AddDate(0, 0, 7*(week-1))
}

// periodOf is the period of grain g that holds day t.
func periodOf(t time.Time, g string) period {
	y, m, _ := t.Date()
	var p period
	switch g {
	case "day":
		p.start = t
		p.end = t.AddDate(0, 0, 1)
		p.index = t.Unix() / 86400
	case "week":
		p.start = t.AddDate(0, 0, -((int(t.Weekday()) + 6) % 7))
		p.end = p.start.AddDate(0, 0, 7)
		p.index = (p.start.Unix()/86400 + 3) / 7 // 1970-01-01 was a Thursday
	case "month":
		p.start = time.Date(y, m, 1, 0, 0, 0, 0, time.UTC)
		p.end = p.start.AddDate(0, 1, 0)
		p.index = int64(y)*12 + int64(m-1)
	case "quarter":
		q := (int(m) - 1) / 3
		p.start = time.Date(y, time.Month(3*q+1), 1, 0, 0, 0, 0, time.UTC)
		p.end = p.start.AddDate(0, 3, 0)
		p.index = int64(y)*4 + int64(q)
	default:
		p.start = time.Date(y, 1, 1, 0, 0, 0, 0, time.UTC)
		p.end = p.start.AddDate(1, 0, 0)
		p.index = int64(y)
	}
	return p
}

// label names a period as its grain does: 2026-03-14, 2026-W11, 2026-03, 2026-Q1, 2026.
func (p period) label(g string) string {
	y, m, _ := p.start.Date()
	switch g {
	case "day":
		return p.start.Format("2006-01-02")
	case "week":
		yy, ww := p.start.ISOWeek()
		return fmt.Sprintf("%04d-W%02d", yy, ww)
	case "month":
		return fmt.Sprintf("%04d-%02d", y, int(m))
	case "quarter":
		return fmt.Sprintf("%04d-Q%d", y, (int(m)-1)/3+1)
	}
	return fmt.Sprintf("%04d", y)
}

// foldable says whether keys of precision p fold into periods of grain g: finer keys
// fold into coarser periods, except that weeks fold into nothing but weeks.
func foldable(p precision, g string) bool {
	gi := grainIndex(g)
	switch {
	case p == precWeek:
		return g == "week"
	case g == "week":
		return p == precDay
	}
	return int(p) <= gi
}
