package cli

import (
	"bytes"
	"errors"
	"flag"
	"slices"
	"strings"
	"testing"

	"github.com/kinmap/kinmap/ingest"
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
	}
	for _, tt := range tests {
		var stderr bytes.Buffer
		if code := Status(&stderr, "kinmap run", tt.err); code != tt.code || !strings.Contains(stderr.String(), tt.want) || (tt.want == "") != (stderr.Len() == 0) {
			t.Errorf("Status(%v) = %d, %q; want %d, %q", tt.err, code, stderr.String(), tt.code, tt.want)
		}
	}
}
