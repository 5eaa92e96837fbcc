package kinmap

import (
	"strings"
	"testing"

	"github.com/kinmap/kinmap/mapper"
)

// A marginal choice names the setting that tries the runner-up, by its
// field (the command words it with its option); a clear one and a given K
// do not.
func TestRegimeChoiceNote(t *testing.T) {
	tests := []struct {
		c    mapper.Choice
		want string
		not  string
	}{
		{mapper.Choice{K: 5, Alpha: 1e-4, RunnerUp: 6, RunnerUpP: 4e-4, Marginal: true}, "re-run with 6 regimes (mapper.Config.Regimes) to see the other", ""},
		{mapper.Choice{K: 5, Alpha: 1e-4, RunnerUp: 4, RunnerUpP: 1e-20}, "a clear choice", "Regimes)"},
		{mapper.Choice{K: 3, Given: true}, "3 regimes, as set", "Regimes)"},
	}
	for _, tt := range tests {
		got := regimeChoice(&tt.c)
		if !strings.Contains(got.Note, tt.want) || tt.not != "" && strings.Contains(got.Note, tt.not) {
			t.Errorf("%+v: note %q, want %q without %q", tt.c, got.Note, tt.want, tt.not)
		}
		if got.K != tt.c.K || got.RunnerUp != tt.c.RunnerUp {
			t.Errorf("%+v: recorded %+v", tt.c, got.Choice)
		}
	}
}
