package kinmap

import (
	"strings"
	"testing"

	"github.com/kinmap/kinmap/mapper"
)

// A marginal choice names the setting that tries the runner-up, by its
// field (the command words it with its option); a clear one and a given K
// do not. Areas folded as phases are named.
func TestRegimeChoiceNote(t *testing.T) {
	tests := []struct {
		c      mapper.Choice
		phases []string
		want   string
		not    string
	}{
		{mapper.Choice{K: 5, Alpha: 1e-4, RunnerUp: 6, RunnerUpP: 4e-4, Marginal: true}, nil, "re-run with 6 regimes (mapper.Config.Regimes) to see the other", ""},
		{mapper.Choice{K: 5, Alpha: 1e-4, RunnerUp: 4, RunnerUpP: 1e-20}, nil, "a clear choice", "Regimes)"},
		{mapper.Choice{K: 3, Given: true}, nil, "3 regimes, as set", "Regimes)"},
		// A phase: the regimes held, the areas found and what was folded.
		{mapper.Choice{K: 3, Alpha: 1e-4, RunnerUp: 5, RunnerUpP: 1e-20}, []string{"the area found as regime 4 is a phase of regime 2"},
			"3 regimes held by the sites, of 4 regimes found; runner-up 5", ""},
	}
	for _, tt := range tests {
		got := regimeChoice(&tt.c, tt.phases)
		if !strings.Contains(got.Note, tt.want) || tt.not != "" && strings.Contains(got.Note, tt.not) {
			t.Errorf("%+v: note %q, want %q without %q", tt.c, got.Note, tt.want, tt.not)
		}
		if got.K != tt.c.K || got.RunnerUp != tt.c.RunnerUp {
			t.Errorf("%+v: recorded %+v", tt.c, got.Choice)
		}
	}
}
