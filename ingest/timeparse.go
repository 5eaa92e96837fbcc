package ingest

import "time"

// Outcomes of parseTime.
const (
	parseOK = iota
	parseBad
	parseRange // well formed, but outside the instants of int64 nanoseconds
)

// parseTime reads an RFC 3339 date-time (§5.6) or an ISO 8601 extended date
// or date-time: YYYY-MM-DD, optionally followed by 'T', 't' or a space and
// hh:mm, hh:mm:ss or hh:mm:ss.fraction (a comma may stand for the point), and
// by an optional zone: 'Z', 'z', ±hh:mm, ±hhmm or ±hh. Digits of the
// fraction past nanoseconds are dropped. A leap second (ss = 60) is read as
// the first second of the next minute, as Unix time has no leap seconds. It
// returns Unix nanoseconds and whether a zone was given; a time without one
// is read as UTC.
func parseTime(s string) (ns int64, zoned bool, outcome int) {
	p := timeParser{s: s}
	year := p.digits(4)
	month := p.after('-', 2)
	day := p.after('-', 2)
	var hour, minute, sec, nsec, offset int
	if !p.end() {
		if c := p.s[p.i]; c == 'T' || c == 't' || c == ' ' {
			p.i++
		} else {
			p.bad = true
		}
		hour = p.digits(2)
		minute = p.after(':', 2)
		if p.peek(':') {
			sec = p.after(':', 2)
			if p.peek('.') || p.peek(',') {
				p.i++
				nsec = p.fraction()
			}
		}
		offset, zoned = p.zone()
	}
	if p.bad || !p.end() || month < 1 || month > 12 || day < 1 || day > daysIn(month, year) ||
		hour > 23 || minute > 59 || sec > 60 {
		return 0, false, parseBad
	}
	t := time.Date(year, time.Month(month), day, hour, minute, sec, nsec, time.UTC)
	t = t.Add(-time.Duration(offset) * time.Second)
	if t.Before(time.Unix(0, minNanos)) || t.After(time.Unix(0, maxNanos)) {
		return 0, zoned, parseRange
	}
	return t.UnixNano(), zoned, parseOK
}

// timeParser walks a time string; any mismatch sets bad.
type timeParser struct {
	s   string
	i   int
	bad bool
}

func (p *timeParser) end() bool { return p.i >= len(p.s) }

func (p *timeParser) peek(c byte) bool { return p.i < len(p.s) && p.s[p.i] == c }

// digits reads exactly n decimal digits.
func (p *timeParser) digits(n int) int {
	v := 0
	for k := 0; k < n; k++ {
		if p.end() || p.s[p.i] < '0' || p.s[p.i] > '9' {
			p.bad = true
			return 0
		}
		v = v*10 + int(p.s[p.i]-'0')
		p.i++
	}
	return v
}

// after reads the separator sep and then n digits.
func (p *timeParser) after(sep byte, n int) int {
	if !p.peek(sep) {
		p.bad = true
		return 0
	}
	p.i++
	return p.digits(n)
}

// fraction reads one or more digits of a decimal fraction of a second and
// returns it in nanoseconds.
func (p *timeParser) fraction() int {
	v, scale, k := 0, 1_000_000_000, 0
	for ; !p.end() && p.s[p.i] >= '0' && p.s[p.i] <= '9'; p.i++ {
		if k < 9 {
			scale /= 10
			v += int(p.s[p.i]-'0') * scale
		}
		k++
	}
	if k == 0 {
		p.bad = true
	}
	return v
}

// zone reads an optional zone designator and returns its offset east of
// UTC in seconds.
func (p *timeParser) zone() (offset int, zoned bool) {
	if p.end() {
		return 0, false
	}
	sign := 1
	switch p.s[p.i] {
	case 'Z', 'z':
		p.i++
		return 0, true
	case '+':
	case '-':
		sign = -1
	default:
		p.bad = true
		return 0, false
	}
	p.i++
	h := p.digits(2)
	m := 0
	switch {
	case p.peek(':'):
		m = p.after(':', 2)
	case !p.end():
		m = p.digits(2)
	}
	if h > 23 || m > 59 {
		p.bad = true
	}
	return sign * (h*3600 + m*60), true
}

// daysIn is the number of days of a month of the proleptic Gregorian
// calendar.
func daysIn(month, year int) int {
	switch month {
	case 2:
		if year%4 == 0 && (year%100 != 0 || year%400 == 0) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}
