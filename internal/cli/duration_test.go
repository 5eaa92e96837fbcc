package cli

import (
	"strings"
	"testing"
	"time"
)

func TestParseDuration(t *testing.T) {
	tests := []struct {
		in   string
		want time.Duration
	}{
		{"90m", 90 * time.Minute},
		{"24h", 24 * time.Hour},
		{"1d", 24 * time.Hour},
		{"2d", 48 * time.Hour},
		{"1w", 7 * 24 * time.Hour},
		{"1d12h", 36 * time.Hour},
		{"1.5d", 36 * time.Hour},
		{"1w2d3h4m5s", (9*24+3)*time.Hour + 4*time.Minute + 5*time.Second},
		{"12h1d", 36 * time.Hour},
		{"-1d", -24 * time.Hour},
		{"+2w", 14 * 24 * time.Hour},
		{"0", 0},
		{"0d", 0},
		{"250ms", 250 * time.Millisecond},
		{"3µs", 3 * time.Microsecond},
		{".5h", 30 * time.Minute},
	}
	for _, tt := range tests {
		got, err := parseDuration(tt.in)
		if err != nil || got != tt.want {
			t.Errorf("parseDuration(%q) = %v, %v; want %v", tt.in, got, err, tt.want)
		}
	}
}

// The Go forms must mean what time.ParseDuration says they mean (standard
// library as the reference).
func TestParseDurationAgreesWithTime(t *testing.T) {
	for _, s := range []string{"1h30m", "2.5s", "100ns", "1.001us", "-3m", "7h0m0.5s"} {
		want, err := time.ParseDuration(s)
		if err != nil {
			t.Fatal(err)
		}
		if got, err := parseDuration(s); err != nil || got != want {
			t.Errorf("parseDuration(%q) = %v, %v; time.ParseDuration gives %v", s, got, err, want)
		}
	}
}

func TestParseDurationErrors(t *testing.T) {
	tests := []struct{ in, msg string }{
		{"", "empty"},
		{"-", "empty"},
		{"5", "missing unit"},
		{"1d5", "missing unit"},
		{"3x", `unknown unit "x"`},
		{"1y", `unknown unit "y"`},
		{"d", "invalid number"},
		{"1..5d", "invalid number"},
		{".d", "invalid number"},
		{"1 d", `unknown unit " d"`},
		{"100000000w", "out of range"},
		{"15000w15000w", "out of range"},
	}
	for _, tt := range tests {
		_, err := parseDuration(tt.in)
		if err == nil || !strings.Contains(err.Error(), tt.msg) || !strings.HasPrefix(err.Error(), "duration ") {
			t.Errorf("parseDuration(%q) error = %v; want one containing %q", tt.in, err, tt.msg)
		}
	}
}
