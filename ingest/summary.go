package ingest

import (
	"fmt"
	"slices"
	"strings"
	"time"
)

// unregisteredShown is how many unregistered sites String names.
const unregisteredShown = 5

// String gives a short account of what was read, a few lines of text.
func (s Summary) String() string {
	var b strings.Builder
	formats := make([]string, 0, len(s.Files))
	for _, f := range s.Files {
		if !slices.Contains(formats, f.Format) {
			formats = append(formats, f.Format)
		}
	}
	fmt.Fprintf(&b, "read %s (%s): %d rows, %s layout\n", plural(len(s.Files), "file"),
		strings.Join(formats, ", "), s.Rows, s.Layout)
	fmt.Fprintf(&b, "kept %s of %s on %s: %s\n", plural64(s.Readings, "reading"),
		plural(s.Sites, "site"), plural(len(s.Channels), "channel"), strings.Join(s.Channels, ", "))
	if !s.Start.IsZero() {
		fmt.Fprintf(&b, "time span %s to %s (%s)\n", s.Start.Format(time.RFC3339Nano),
			s.End.Format(time.RFC3339Nano), s.End.Sub(s.Start))
	}
	if len(s.Dropped) > 0 {
		b.WriteString(dropList(s.Dropped, "dropped: ") + "\n")
	}
	if s.Duplicates > 0 {
		fmt.Fprintf(&b, "duplicates: %s replaced by a later reading of the same site, channel and time\n",
			plural64(s.Duplicates, "reading"))
	}
	if len(s.SkippedColumns) > 0 {
		fmt.Fprintf(&b, "skipped non-numeric columns: %s\n", strings.Join(s.SkippedColumns, ", "))
	}
	if s.NaiveTime {
		b.WriteString("note: some times carry no time zone and were read as UTC\n")
	}
	if n := len(s.Unregistered); n > 0 {
		shown := s.Unregistered[:min(n, unregisteredShown)]
		more := ""
		if n > len(shown) {
			more = fmt.Sprintf(" and %d more", n-len(shown))
		}
		fmt.Fprintf(&b, "%s not in the site register (no position): %s%s\n",
			plural(n, "site"), strings.Join(shown, ", "), more)
	}
	return strings.TrimSuffix(b.String(), "\n")
}

// dropList writes counts by reason in the order of the reasons, after a
// prefix; it is empty when nothing was dropped.
func dropList(dropped map[string]int64, prefix string) string {
	var parts []string
	for _, reason := range dropNames {
		if n := dropped[reason]; n > 0 {
			parts = append(parts, fmt.Sprintf("%s %d", reason, n))
		}
	}
	if len(parts) == 0 {
		return ""
	}
	return prefix + strings.Join(parts, ", ")
}

func plural(n int, word string) string { return plural64(int64(n), word) }

func plural64(n int64, word string) string {
	if n == 1 {
		return "1 " + word
	}
	return fmt.Sprintf("%d %ss", n, word)
}
