package cli

import (
	"fmt"
	"maps"
	"slices"
	"strings"
	"unicode/utf8"
)

// unitsValue is a CHANNEL=UNIT,CHANNEL=UNIT flag.
type unitsValue struct{ p *map[string]string }

func (u unitsValue) String() string {
	if u.p == nil || len(*u.p) == 0 {
		return ""
	}
	var parts []string
	for _, k := range slices.Sorted(maps.Keys(*u.p)) {
		parts = append(parts, k+"="+(*u.p)[k])
	}
	return strings.Join(parts, ",")
}

func (u unitsValue) Set(s string) error {
	if *u.p == nil {
		*u.p = map[string]string{}
	}
	for part := range strings.SplitSeq(s, ",") {
		name, unit, ok := strings.Cut(part, "=")
		name, unit = strings.TrimSpace(name), strings.TrimSpace(unit)
		if !ok || name == "" || unit == "" || !utf8.ValidString(unit) || len(unit) > 32 {
			return fmt.Errorf("unit %q: want CHANNEL=UNIT with a unit of at most 32 bytes, for example flow=m3/h", part)
		}
		(*u.p)[name] = unit
	}
	return nil
}

func (u unitsValue) Get() any { return *u.p }
