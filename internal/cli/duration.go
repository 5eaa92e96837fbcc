package cli

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"
)

const durationUnits = "ns, us, ms, s, m, h, d, w"

// parseDuration parses a duration such as "90m", "1d12h" or "2w": a Go
// duration (see time.ParseDuration) whose components may also use the units
// d (24 h) and w (7 d). Components combine in any order, with an optional
// leading sign; "0" needs no unit.
func parseDuration(s string) (time.Duration, error) {
	fail := func(format string, a ...any) (time.Duration, error) {
		return 0, fmt.Errorf("duration %q: "+format, append([]any{s}, a...)...)
	}
	rest := s
	neg := false
	if rest != "" && (rest[0] == '-' || rest[0] == '+') {
		neg = rest[0] == '-'
		rest = rest[1:]
	}
	if rest == "" {
		return fail("empty")
	}
	if rest == "0" {
		return 0, nil
	}
	var total time.Duration
	for rest != "" {
		i := strings.IndexFunc(rest, func(r rune) bool { return (r < '0' || r > '9') && r != '.' })
		if i < 0 {
			return fail("missing unit after %q (units: %s)", rest, durationUnits)
		}
		num := rest[:i]
		if num == "" || num == "." || strings.Count(num, ".") > 1 {
			return fail("invalid number before %q", rest[i:])
		}
		j := strings.IndexFunc(rest[i:], func(r rune) bool { return (r >= '0' && r <= '9') || r == '.' })
		if j < 0 {
			j = len(rest) - i
		}
		unit := rest[i : i+j]
		rest = rest[i+j:]

		// The units d and w are read as hours so that time.ParseDuration does
		// the exact decimal arithmetic.
		factor := time.Duration(1)
		switch unit {
		case "d":
			unit, factor = "h", 24
		case "w":
			unit, factor = "h", 7*24
		case "ns", "us", "µs", "μs", "ms", "s", "m", "h":
		default:
			return fail("unknown unit %q (units: %s)", unit, durationUnits)
		}
		v, err := time.ParseDuration(num + unit)
		if err != nil || v > math.MaxInt64/factor || total > math.MaxInt64-v*factor {
			return fail("out of range")
		}
		total += v * factor
	}
	if neg {
		total = -total
	}
	return total, nil
}

// FormatDuration writes whole weeks and days with their suffixes, other
// lengths as Go durations.
func FormatDuration(d time.Duration) string {
	const day = 24 * time.Hour
	switch {
	case d%(7*day) == 0:
		return strconv.Itoa(int(d/(7*day))) + "w"
	case d%day == 0:
		return strconv.Itoa(int(d/day)) + "d"
	}
	return d.String()
}
