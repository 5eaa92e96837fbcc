package cli

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"io"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/kinmap/kinmap"
	"github.com/kinmap/kinmap/features"
	"github.com/kinmap/kinmap/ingest"
	"github.com/kinmap/kinmap/lattice"
	"github.com/kinmap/kinmap/timeline"
)

func TestSpreadMulti(t *testing.T) {
	got := SpreadMulti([]string{"--data", "a", "b", "--out", "o", "-data", "c", "--data=d", "--data"}, "data")
	want := []string{"--data=a", "--data=b", "--out", "o", "--data=c", "--data=d", "--data"}
	if !slices.Equal(got, want) {
		t.Errorf("SpreadMulti = %q, want %q", got, want)
	}
}

func TestStatus(t *testing.T) {
	tests := []struct {
		err  error
		code int
		want string
	}{
		{nil, ExitOK, ""},
		{flag.ErrHelp, ExitOK, ""},
		{UsageError("no output folder"), ExitUsage, "kinmap run: no output folder\nRun 'kinmap run -h' for its options.\n"},
		{ingest.ErrUsage, ExitUsage, "Run 'kinmap run -h'"},
		{errors.New("ingest: a.csv: column \"time\": empty"), ExitData, "kinmap run: ingest: a.csv: column \"time\": empty\n"},
		// Library errors carry fields; the command words them with its options.
		{&kinmap.UsageError{Err: &features.StepError{Field: "Window", Value: 10 * time.Millisecond, Step: 5 * time.Second}}, ExitUsage,
			"kinmap run: --window 10ms is shorter than the sampling step found in the data (5s): give at least 5s\n"},
		{&kinmap.UsageError{Err: &features.StepError{Field: "Stride", Value: time.Millisecond, Step: time.Minute}}, ExitUsage, "--stride 1ms is shorter"},
		{&kinmap.UsageError{Err: &features.WindowLimitError{Windows: 6e8, Stride: time.Millisecond}}, ExitUsage, "about 600000000 windows, beyond the limit of 5000000: give a longer --stride"},
		{&kinmap.UsageError{Err: &lattice.LimitError{What: "1000x1000", Value: 1e6, Limit: 4096, Unit: "units"}}, ExitUsage, "--grid: 1000x1000: 1000000 units, beyond the limit of 4096"},
		{fmt.Errorf("decoding: %w", &kinmap.NoWindowError{Reasons: "3 for low coverage"}), ExitData, "(3 for low coverage); try a lower --min-coverage or a longer --window\n"},
		{&kinmap.NoWindowError{Reasons: "5 for coverage", Unit: &ingest.UnitError{Sample: 1780000000, Given: "ms", Likely: "s"}}, ExitData,
			"(5 for coverage): integer times such as 1780000000 look like epochs in seconds, not milliseconds; read them with --time-unit s\n"},
		// The decoding's settings too (timeline.ConfigError).
		{&kinmap.UsageError{Err: &timeline.ConfigError{Field: "MinDwell", Value: -1, Want: "of 1 window or more"}}, ExitUsage,
			"kinmap run: --min-dwell -1: want a value of 1 window or more\n"},
		{&kinmap.UsageError{Err: &timeline.ConfigError{Field: "UnfamiliarQ", Value: 1.5, Want: "in (0, 1]"}}, ExitUsage, "--unfamiliar-q 1.5: want a value in (0, 1]"},
		{&kinmap.UsageError{Err: &timeline.ConfigError{Field: "SwitchCost", Value: -2, Want: "of 0 or more, finite"}}, ExitUsage, "--switch-cost -2: want a value of 0 or more"},
		{&ingest.Error{File: "a.csv", Err: fmt.Errorf("no readings: %w", &ingest.UnitError{Sample: 1780000000000, Given: "s", Likely: "ms"})}, ExitData,
			"look like epochs in milliseconds, not seconds; read them with --time-unit ms\n"},
	}
	for _, tt := range tests {
		var stderr bytes.Buffer
		if code := Status(&stderr, "kinmap run", tt.err); code != tt.code || !strings.Contains(stderr.String(), tt.want) || (tt.want == "") != (stderr.Len() == 0) {
			t.Errorf("Status(%v) = %d, %q; want %d, %q", tt.err, code, stderr.String(), tt.code, tt.want)
		}
	}
}

// The usage text shows each flag's default once: from the flag, unless the
// help text states it.
func TestPrintUsageDefaults(t *testing.T) {
	var n int
	var share float64
	var on bool
	f := New(Command{Name: "x", Summary: "s", Usage: "x [options]", Example: "x --n 3"}, nil)
	f.Section("Options")
	f.Int(&n, "n", 0, "`N` things (default: as many as needed)")
	f.Num(&share, "share", 0.6, "a `SHARE`")
	f.Bool(&on, "on", false, "switch it on")
	var out bytes.Buffer
	f.PrintUsage(&out)
	tests := []struct {
		flag, want, not string
	}{
		{"--n N", "(default: as many as needed)", "(default 0)"},
		{"--share SHARE", "(default 0.6)", ""},
		{"--on", "switch it on", "(default false)"},
	}
	for _, tt := range tests {
		i := strings.Index(out.String(), tt.flag)
		if i < 0 {
			t.Errorf("usage lacks %s:\n%s", tt.flag, out.String())
			continue
		}
		line, _, _ := strings.Cut(out.String()[i:], "\n")
		if !strings.Contains(line, tt.want) || tt.not != "" && strings.Contains(line, tt.not) {
			t.Errorf("usage line %q: want %q and not %q", line, tt.want, tt.not)
		}
	}
}

// Library warnings name settings by their fields; the command words them
// with its options.
func TestWordWarning(t *testing.T) {
	for _, tt := range []struct{ in, want string }{
		{"mapper: 57% of the 56 units win no window, so the winners form thin lines across the map: use a smaller grid or a larger initial neighbourhood width (mapper.Config.Sigma0)",
			"use a smaller grid or a larger initial neighbourhood width (--sigma0)"},
		{"3 and 4 regimes fit about as well: re-run with 4 regimes (mapper.Config.Regimes) to see the other",
			"re-run with 4 regimes (--regimes) to see the other"},
		{`12 sites have no position ("a", "b", "c" and 9 more); their features in sites.geojson have no geometry: give a site register (export.Run.Register)`,
			"give a site register (--sites)"},
	} {
		if got := WordWarning(tt.in); !strings.HasSuffix(got, tt.want) {
			t.Errorf("WordWarning(%q) = %q, want it to end %q", tt.in, got, tt.want)
		}
	}
}

// An explicit 0 for a setting whose library field reads 0 as the default
// is refused with the option and its range; left out, or given another
// value, the option parses.
func TestNonZero(t *testing.T) {
	tests := []struct {
		args []string
		want string // "" for no error
	}{
		{nil, ""},
		{[]string{"--top-confidence", "0"}, "--top-confidence 0: want a value in (0, 1]"},
		{[]string{"--top-confidence=0.0"}, "--top-confidence 0: want a value in (0, 1]"},
		{[]string{"--top-confidence", "0.2"}, ""},
		{[]string{"--fleet-p", "0"}, "--fleet-p 0: want a value in (0, 1)"},
		{[]string{"--fleet-p", "-0"}, "--fleet-p 0: want a value in (0, 1)"},
		{[]string{"--fleet-p", "0.01"}, ""},
		{[]string{"--min-dwell", "0"}, "--min-dwell 0: want a value of 1 window or more"},
		{[]string{"--min-dwell", "1"}, ""},
		{[]string{"--unfamiliar-q", "0"}, "--unfamiliar-q 0: want a value in (0, 1]"},
		{[]string{"--eta0", "0"}, "--eta0 0: want a value in (0, 1]"},
		// 0 is documented as a choice for these.
		{[]string{"--switch-cost", "0"}, ""},
		{[]string{"--long-stay", "0"}, ""},
		{[]string{"--regimes", "0"}, ""},
	}
	for _, tt := range tests {
		o := kinmap.DefaultOptions()
		f := New(Command{Name: "run"}, nil)
		f.Map(&o, true)
		f.Timeline(&o)
		f.WorkList(&o)
		err := f.Parse(tt.args, io.Discard)
		switch {
		case tt.want == "" && err != nil:
			t.Errorf("%q: %v, want no error", tt.args, err)
		case tt.want != "" && (err == nil || !kinmap.IsUsage(err) || err.Error() != tt.want):
			t.Errorf("%q: %v, want the usage error %q", tt.args, err, tt.want)
		}
	}
}
